import { ModelConfigError } from '../model-config-error.js';
import { checkPositiveFinite } from '../models/parameter-checks.js';
import { checkStateDim, checkStateIndices } from './measurement-checks.js';
import { wrapAngle, type MeasurementModel } from './measurement-model.js';

/** Below this range (m) the bearing, and so the Jacobian, is taken as undefined. */
export const RANGE_BEARING_MIN_RANGE_M = 1e-9;

/** Settings of a range-bearing sensor at a fixed site (a yard radar, a laser station). */
export interface RangeBearingMeasurementOptions {
  /** State dimension P of the process model. */
  readonly stateDim: number;
  /** Indices of the horizontal position components, [iEast, iNorth]. */
  readonly positionIndices: readonly number[];
  /** Site east coordinate in the state's ENU frame, metres. */
  readonly siteEastM: number;
  /** Site north coordinate in the state's ENU frame, metres. */
  readonly siteNorthM: number;
  /** Default 1-σ range noise in metres. */
  readonly rangeSigmaM: number;
  /** Default 1-σ bearing noise in radians. */
  readonly bearingSigmaRad: number;
}

/**
 * Range and bearing from a fixed site: y = [‖p − s‖, atan2(Δeast, Δnorth)] + w, range in
 * metres, bearing in radians clockwise from north, wrapped to (−π, π].
 *
 * Jacobian, with Δ = p − s and r = ‖Δ‖: ∂range/∂p = (Δe, Δn)/r, ∂bearing/∂p = (Δn, −Δe)/r².
 * At the site itself (r < RANGE_BEARING_MIN_RANGE_M) both rows are zero. The bearing innovation
 * is wrapped so that a target due south never produces a 2π jump. Initialization inverts the
 * polar map, p = s + r(sin b, cos b), with covariance J R Jᵀ, J = ∂p/∂(r, b) (first order;
 * the converted-measurement bias, of order r·σb²/2 (Lerro & Bar-Shalom, IEEE Trans. AES 29(3),
 * 1993; from memory), is ignored: it is small against the spread r·σb for σb well below 1 rad).
 */
export class RangeBearingMeasurement implements MeasurementModel {
  readonly dim = 2;
  readonly stateDim: number;
  readonly linear = false;
  readonly componentNames: readonly string[] = Object.freeze(['range', 'bearing']);
  readonly R: Float64Array;
  /** Site east coordinate, metres. */
  readonly siteEastM: number;
  /** Site north coordinate, metres. */
  readonly siteNorthM: number;
  private readonly iEast: number;
  private readonly iNorth: number;

  /** Builds the sensor; throws ModelConfigError for a bad stateDim, index pair, site or sigma. */
  constructor(opts: RangeBearingMeasurementOptions) {
    this.stateDim = checkStateDim(opts.stateDim);
    const p = checkStateIndices('positionIndices', opts.positionIndices, [2], this.stateDim);
    this.iEast = p[0]!;
    this.iNorth = p[1]!;
    this.siteEastM = checkFinite('siteEastM', opts.siteEastM);
    this.siteNorthM = checkFinite('siteNorthM', opts.siteNorthM);
    const sr = checkPositiveFinite('rangeSigmaM', opts.rangeSigmaM);
    const sb = checkPositiveFinite('bearingSigmaRad', opts.bearingSigmaRad);
    this.R = Float64Array.of(sr * sr, 0, 0, sb * sb);
  }

  /** Wraps the reported bearing (radians) to (−π, π]; the range is left as reported. */
  normalizeInPlace(y: Float64Array): void {
    y[1] = wrapAngle(y[1]!);
  }

  /** ŷ = [‖p − s‖, atan2(Δeast, Δnorth)]. */
  measureInto(x: Float64Array, yhat: Float64Array): void {
    const de = x[this.iEast]! - this.siteEastM;
    const dn = x[this.iNorth]! - this.siteNorthM;
    yhat[0] = Math.hypot(de, dn);
    yhat[1] = Math.atan2(de, dn);
  }

  /** H rows [Δe, Δn]/r and [Δn, −Δe]/r² in the position columns; zero at the site. */
  jacobianInto(x: Float64Array, H: Float64Array): void {
    const n = this.stateDim;
    H.fill(0, 0, 2 * n);
    const de = x[this.iEast]! - this.siteEastM;
    const dn = x[this.iNorth]! - this.siteNorthM;
    const r = Math.hypot(de, dn);
    if (!(r >= RANGE_BEARING_MIN_RANGE_M)) return;
    const r2 = r * r;
    H[this.iEast] = de / r;
    H[this.iNorth] = dn / r;
    H[n + this.iEast] = dn / r2;
    H[n + this.iNorth] = -de / r2;
  }

  /** ν = [y_r − ŷ_r, wrap(y_b − ŷ_b)]. */
  innovationInto(y: Float64Array, yhat: Float64Array, nu: Float64Array): void {
    nu[0] = y[0]! - yhat[0]!;
    nu[1] = wrapAngle(y[1]! - yhat[1]!);
  }

  /**
   * Sets east/north from the fix and their covariance to J R Jᵀ, clearing their cross terms
   * with the other states; false (nothing changed) for a non-finite fix or R, or a negative range.
   */
  initializeInPlace(y: Float64Array, R: Float64Array, x: Float64Array, P: Float64Array): boolean {
    const r = y[0]!;
    const b = y[1]!;
    if (!(r >= 0) || !Number.isFinite(r) || !Number.isFinite(b)) return false;
    const sb = Math.sin(b);
    const cb = Math.cos(b);
    // J = ∂(east, north)/∂(range, bearing).
    const j00 = sb, j01 = r * cb, j10 = cb, j11 = -r * sb;
    const r00 = R[0]!, r01 = 0.5 * (R[1]! + R[2]!), r11 = R[3]!;
    const pee = j00 * (j00 * r00 + j01 * r01) + j01 * (j00 * r01 + j01 * r11);
    const pen = j00 * (j10 * r00 + j11 * r01) + j01 * (j10 * r01 + j11 * r11);
    const pnn = j10 * (j10 * r00 + j11 * r01) + j11 * (j10 * r01 + j11 * r11);
    if (!Number.isFinite(pee + pen + pnn)) return false;
    const n = this.stateDim;
    const ie = this.iEast;
    const iN = this.iNorth;
    x[ie] = this.siteEastM + r * sb;
    x[iN] = this.siteNorthM + r * cb;
    for (let k = 0; k < n; k++) {
      P[ie * n + k] = 0; P[k * n + ie] = 0;
      P[iN * n + k] = 0; P[k * n + iN] = 0;
    }
    P[ie * n + ie] = pee;
    P[ie * n + iN] = pen;
    P[iN * n + ie] = pen;
    P[iN * n + iN] = pnn;
    return true;
  }
}

function checkFinite(name: string, value: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new ModelConfigError(name, `${name} must be a finite number of metres, got ${String(value)}`);
  }
  return value;
}
