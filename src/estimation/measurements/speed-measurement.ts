import { checkPositiveFinite } from '../models/parameter-checks.js';
import { checkStateDim, checkStateIndices } from './measurement-checks.js';
import type { MeasurementModel } from './measurement-model.js';

/** Below this speed (m/s) the direction of v, and so the Jacobian, is taken as undefined. */
export const SPEED_JACOBIAN_MIN_SPEED_MPS = 1e-9;

/** Settings of a speed sensor (a wheel odometer, a GNSS speed-over-ground field). */
export interface SpeedMeasurementOptions {
  /** State dimension P of the process model. */
  readonly stateDim: number;
  /** Indices of the velocity components whose norm is measured, e.g. [iVEast, iVNorth] or with iVUp. */
  readonly velocityIndices: readonly number[];
  /** Default 1-σ speed noise in m/s. */
  readonly speedSigmaMps: number;
}

/**
 * Speed y = ‖v‖ + w (m/s), the Euclidean norm of a velocity sub-vector; Jacobian ∂‖v‖/∂v = vᵀ/‖v‖.
 *
 * At rest (‖v‖ < SPEED_JACOBIAN_MIN_SPEED_MPS) the norm has no derivative; the Jacobian row is
 * then zero, so an EKF update learns nothing from the fix (S = R, gain zero) instead of dividing
 * by zero. The UKF, which only evaluates ‖v‖ at sigma points, handles that case properly (the
 * spread of v gives ‖v‖ a positive mean and a well-defined cross-covariance). A speed says
 * nothing of the direction of motion, so it cannot initialize a track.
 */
export class SpeedMeasurement implements MeasurementModel {
  readonly dim = 1;
  readonly stateDim: number;
  readonly linear = false;
  readonly componentNames: readonly string[] = Object.freeze(['speed']);
  readonly R: Float64Array;
  /** The velocity indices, as validated. */
  readonly velocityIndices: readonly number[];

  /** Builds the sensor; throws ModelConfigError for a bad stateDim, index list or sigma. */
  constructor(opts: SpeedMeasurementOptions) {
    this.stateDim = checkStateDim(opts.stateDim);
    this.velocityIndices = checkStateIndices('velocityIndices', opts.velocityIndices, [1, 2, 3], this.stateDim);
    const sigma = checkPositiveFinite('speedSigmaMps', opts.speedSigmaMps);
    this.R = Float64Array.of(sigma * sigma);
  }

  /** Identity: speed is reported in m/s. */
  normalizeInPlace(_y: Float64Array): void {}

  /** ŷ = ‖v‖. */
  measureInto(x: Float64Array, yhat: Float64Array): void {
    yhat[0] = this.norm(x);
  }

  /** H = vᵀ/‖v‖ in the velocity columns; a zero row at rest. */
  jacobianInto(x: Float64Array, H: Float64Array): void {
    H.fill(0, 0, this.stateDim);
    const s = this.norm(x);
    if (!(s >= SPEED_JACOBIAN_MIN_SPEED_MPS)) return;
    const v = this.velocityIndices;
    for (let k = 0; k < v.length; k++) H[v[k]!] = x[v[k]!]! / s;
  }

  /** ν = y − ŷ. */
  innovationInto(y: Float64Array, yhat: Float64Array, nu: Float64Array): void {
    nu[0] = y[0]! - yhat[0]!;
  }

  /** Always false: a speed cannot place a track. */
  initializeInPlace(_y: Float64Array, _R: Float64Array, _x: Float64Array, _P: Float64Array): boolean {
    return false;
  }

  private norm(x: Float64Array): number {
    const v = this.velocityIndices;
    let s = 0;
    // Indexed loops: the hot path must not create iterators.
    for (let k = 0; k < v.length; k++) s += x[v[k]!]! * x[v[k]!]!;
    return Math.sqrt(s);
  }
}
