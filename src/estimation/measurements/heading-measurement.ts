import { checkPositiveFinite } from '../models/parameter-checks.js';
import { checkStateDim, checkStateIndices } from './measurement-checks.js';
import { wrapAngle, type MeasurementModel } from './measurement-model.js';

/** Below this horizontal speed (m/s) the heading, and so its Jacobian, is taken as undefined. */
export const HEADING_JACOBIAN_MIN_SPEED_MPS = 1e-9;

/** Settings of a heading (course over ground) sensor. */
export interface HeadingMeasurementOptions {
  /** State dimension P of the process model. */
  readonly stateDim: number;
  /** Indices of the horizontal velocity components, [iVEast, iVNorth]. */
  readonly velocityIndices: readonly number[];
  /** Default 1-σ heading noise in radians. */
  readonly headingSigmaRad: number;
}

/**
 * Heading y = atan2(v_east, v_north) + w, in radians clockwise from north (0 = north,
 * π/2 = east), wrapped to (−π, π]. Jacobian ∂y/∂(v_east, v_north) = (v_north, −v_east)/s²
 * with s the horizontal speed; a zero row below HEADING_JACOBIAN_MIN_SPEED_MPS, where the
 * direction is undefined (the EKF then learns nothing from the fix). The innovation is wrapped,
 * so a report of 179° against a prediction of −179° is a 2° error, not 358°. A heading says
 * nothing of position or speed, so it cannot initialize a track.
 */
export class HeadingMeasurement implements MeasurementModel {
  readonly dim = 1;
  readonly stateDim: number;
  readonly linear = false;
  readonly componentNames: readonly string[] = Object.freeze(['heading']);
  readonly R: Float64Array;
  private readonly iEast: number;
  private readonly iNorth: number;

  /** Builds the sensor; throws ModelConfigError for a bad stateDim, index pair or sigma. */
  constructor(opts: HeadingMeasurementOptions) {
    this.stateDim = checkStateDim(opts.stateDim);
    const v = checkStateIndices('velocityIndices', opts.velocityIndices, [2], this.stateDim);
    this.iEast = v[0]!;
    this.iNorth = v[1]!;
    const sigma = checkPositiveFinite('headingSigmaRad', opts.headingSigmaRad);
    this.R = Float64Array.of(sigma * sigma);
  }

  /** Wraps a reported heading (radians, e.g. in [0, 2π)) to (−π, π]. */
  normalizeInPlace(y: Float64Array): void {
    y[0] = wrapAngle(y[0]!);
  }

  /** ŷ = atan2(v_east, v_north). */
  measureInto(x: Float64Array, yhat: Float64Array): void {
    yhat[0] = Math.atan2(x[this.iEast]!, x[this.iNorth]!);
  }

  /** H = (v_north, −v_east)/s² in the velocity columns; a zero row at rest. */
  jacobianInto(x: Float64Array, H: Float64Array): void {
    H.fill(0, 0, this.stateDim);
    const ve = x[this.iEast]!;
    const vn = x[this.iNorth]!;
    const s2 = ve * ve + vn * vn;
    if (!(s2 >= HEADING_JACOBIAN_MIN_SPEED_MPS * HEADING_JACOBIAN_MIN_SPEED_MPS)) return;
    H[this.iEast] = vn / s2;
    H[this.iNorth] = -ve / s2;
  }

  /** ν = wrap(y − ŷ) to (−π, π]. */
  innovationInto(y: Float64Array, yhat: Float64Array, nu: Float64Array): void {
    nu[0] = wrapAngle(y[0]! - yhat[0]!);
  }

  /** Always false: a heading cannot place a track. */
  initializeInPlace(_y: Float64Array, _R: Float64Array, _x: Float64Array, _P: Float64Array): boolean {
    return false;
  }
}
