import { ModelConfigError } from '../model-config-error.js';
import { checkPositiveFinite } from '../models/parameter-checks.js';
import { LocalTangentFrame, type GeodeticOrigin } from './local-tangent-frame.js';
import { checkStateDim, checkStateIndices } from './measurement-checks.js';
import { wrapAngle, type MeasurementModel } from './measurement-model.js';
import { meridianRadiusM, primeVerticalRadiusM } from './wgs84.js';

const DEG = Math.PI / 180;
/** Fixed-point steps that find the height putting a latitude/longitude fix at the prior's up. */
const HEIGHT_STEPS = 3;

/** Settings of a GNSS position sensor reporting latitude/longitude (and optionally height) on WGS-84. */
export interface GeodeticMeasurementOptions {
  /** State dimension P of the process model. */
  readonly stateDim: number;
  /** ENU position indices about the origin: [iEast, iNorth] (up taken as 0) or [iEast, iNorth, iUp]. */
  readonly positionIndices: readonly number[];
  /** Origin of the state's ENU frame; latitude strictly inside (−90°, 90°). */
  readonly origin: GeodeticOrigin;
  /** True when fixes carry an ellipsoidal height (needs an up index and verticalSigmaM); default false. */
  readonly withHeight?: boolean;
  /** Default horizontal 1-σ accuracy in metres (per axis). */
  readonly horizontalSigmaM: number;
  /** Default vertical 1-σ accuracy in metres; required with withHeight. */
  readonly verticalSigmaM?: number;
}

/**
 * A GNSS fix y = [latDeg, lonDeg(, hM)] read against an ENU position state about an origin
 * (φ0, λ0, h0).
 *
 * Measurement space: degrees are a poor scale for S (1e-5° is a metre), so normalizeInPlace
 * maps the report to scaled geodetic metres [(φ − φ0)(M0 + h0), wrap(λ − λ0)(N0 + h0)cosφ0, h],
 * M0, N0 the meridian and prime-vertical radii at the origin. This is a constant linear
 * rescaling of latitude/longitude, so h(x) is the same map applied to the exact ENU → geodetic
 * conversion of the state position, and near the origin one scaled metre is one metre north or
 * east. The Jacobian is analytic:
 * ∂(φ, λ, h)/∂(E, N, U) = diag(1/(M + h), 1/((N + h)cosφ), 1)·[n; e; u]·R0ᵀ, with n, e, u the
 * point's own north/east/up unit vectors in ECEF and R0 the origin's ECEF → ENU rotation, then
 * scaled by diag(M0 + h0, (N0 + h0)cosφ0, 1). With a two-index state the up coordinate is 0
 * (the tangent plane), a fine approximation over a yard: 1 km out the plane is 8 cm above the
 * ellipsoid and the horizontal effect is under a millimetre.
 */
export class GeodeticMeasurement implements MeasurementModel {
  readonly dim: number;
  readonly stateDim: number;
  readonly linear = false;
  readonly componentNames: readonly string[];
  readonly R: Float64Array;
  /** The ENU frame about the configured origin. */
  readonly frame: LocalTangentFrame;
  /** Scaled metres per radian of latitude, M0 + h0. */
  readonly latitudeScaleM: number;
  /** Scaled metres per radian of longitude, (N0 + h0)cosφ0. */
  readonly longitudeScaleM: number;
  private readonly iEast: number;
  private readonly iNorth: number;
  /** Up index, or −1 for a horizontal state. */
  private readonly iUp: number;
  /** [iEast, iNorth(, iUp)] for the covariance block. */
  private readonly positionIds: Int32Array;
  private readonly geo = new Float64Array(3);
  private readonly jac = new Float64Array(9);
  private readonly gain = new Float64Array(9);

  /** Builds the sensor; throws ModelConfigError for bad indices, origin, sigmas or a height without an up state. */
  constructor(opts: GeodeticMeasurementOptions) {
    this.stateDim = checkStateDim(opts.stateDim);
    const p = checkStateIndices('positionIndices', opts.positionIndices, [2, 3], this.stateDim);
    this.iEast = p[0]!;
    this.iNorth = p[1]!;
    this.iUp = p[2] ?? -1;
    this.positionIds = Int32Array.from(p);
    this.frame = new LocalTangentFrame(opts.origin);
    if (!(Math.abs(this.frame.latDeg) < 90)) {
      throw new ModelConfigError('origin.latDeg', `origin.latDeg must be strictly inside (−90, 90) for a longitude scale, got ${this.frame.latDeg}`);
    }
    const withHeight = opts.withHeight ?? false;
    if (withHeight && this.iUp < 0) {
      throw new ModelConfigError('positionIndices', `positionIndices must have 3 entries (east, north, up) when withHeight is true, got 2`);
    }
    this.dim = withHeight ? 3 : 2;
    this.componentNames = Object.freeze(withHeight ? ['latitude', 'longitude', 'height'] : ['latitude', 'longitude']);
    this.latitudeScaleM = this.frame.meridianRadiusM + this.frame.hM;
    this.longitudeScaleM = (this.frame.primeVerticalRadiusM + this.frame.hM) * Math.cos(this.frame.latRad);
    const sh = checkPositiveFinite('horizontalSigmaM', opts.horizontalSigmaM);
    this.R = new Float64Array(this.dim * this.dim);
    this.R[0] = sh * sh;
    this.R[this.dim + 1] = sh * sh;
    if (withHeight) {
      if (opts.verticalSigmaM === undefined) {
        throw new ModelConfigError('verticalSigmaM', 'verticalSigmaM must be a positive finite number when withHeight is true, got undefined');
      }
      const sv = checkPositiveFinite('verticalSigmaM', opts.verticalSigmaM);
      this.R[8] = sv * sv;
    } else if (opts.verticalSigmaM !== undefined) {
      throw new ModelConfigError('verticalSigmaM', `verticalSigmaM must be omitted when withHeight is false, got ${String(opts.verticalSigmaM)}`);
    }
  }

  /** [latDeg, lonDeg(, hM)] as reported → [(φ − φ0)(M0 + h0), wrap(λ − λ0)(N0 + h0)cosφ0(, h)] in place. */
  normalizeInPlace(y: Float64Array): void {
    y[0] = (y[0]! - this.frame.latDeg) * DEG * this.latitudeScaleM;
    y[1] = this.frame.longitudeOffsetRad(y[1]!) * this.longitudeScaleM;
  }

  /** ŷ: the state's ENU position converted exactly to geodetic offsets, then scaled. */
  measureInto(x: Float64Array, yhat: Float64Array): void {
    const g = this.geo;
    this.frame.enuToGeodeticOffsetInto(x[this.iEast]!, x[this.iNorth]!, this.iUp < 0 ? 0 : x[this.iUp]!, g);
    yhat[0] = g[0]! * this.latitudeScaleM;
    yhat[1] = g[1]! * this.longitudeScaleM;
    if (this.dim === 3) yhat[2] = g[2]!;
  }

  /** H = diag(scales)·∂(φ, λ, h)/∂(E, N, U) in the position columns (see the class comment). */
  jacobianInto(x: Float64Array, H: Float64Array): void {
    const n = this.stateDim;
    H.fill(0, 0, this.dim * n);
    this.scaledJacobianAt(x);
    const j = this.jac;
    for (let r = 0; r < this.dim; r++) {
      H[r * n + this.iEast] = j[3 * r]!;
      H[r * n + this.iNorth] = j[3 * r + 1]!;
      if (this.iUp >= 0) H[r * n + this.iUp] = j[3 * r + 2]!;
    }
  }

  /** ν = y − ŷ, the longitude component wrapped over a full turn (2π(N0 + h0)cosφ0). */
  innovationInto(y: Float64Array, yhat: Float64Array, nu: Float64Array): void {
    nu[0] = y[0]! - yhat[0]!;
    const s = this.longitudeScaleM;
    nu[1] = wrapAngle((y[1]! - yhat[1]!) / s) * s;
    if (this.dim === 3) nu[2] = y[2]! - yhat[2]!;
  }

  /**
   * R in the scaled space for a reported horizontal 1-σ accuracy in metres at a (normalized)
   * fix: σ² times the square of the scale-to-local radius ratio, (M0 + h0)/(M + h) north and
   * (N0 + h0)cosφ0/((N + h)cosφ) east. With height, the vertical variance is verticalSigmaM² or
   * the default. Returns false (R untouched) for a sigma that is not positive and finite.
   */
  horizontalAccuracyToCovarianceInto(sigmaM: number, yNormalized: Float64Array, R: Float64Array, verticalSigmaM?: number): boolean {
    if (!(sigmaM > 0 && sigmaM < Infinity)) return false;
    if (verticalSigmaM !== undefined && !(verticalSigmaM > 0 && verticalSigmaM < Infinity)) return false;
    const lat = this.frame.latRad + yNormalized[0]! / this.latitudeScaleM;
    const h = this.dim === 3 ? yNormalized[2]! : this.frame.hM;
    const kNorth = (sigmaM * this.latitudeScaleM) / (meridianRadiusM(lat) + h);
    const kEast = (sigmaM * this.longitudeScaleM) / ((primeVerticalRadiusM(lat) + h) * Math.cos(lat));
    if (!Number.isFinite(kNorth) || !Number.isFinite(kEast)) return false;
    const m = this.dim;
    R.fill(0, 0, m * m);
    R[0] = kNorth * kNorth;
    R[m + 1] = kEast * kEast;
    if (m === 3) R[8] = verticalSigmaM === undefined ? this.R[8]! : verticalSigmaM * verticalSigmaM;
    return true;
  }

  /**
   * Sets the position from a normalized fix by the exact inverse conversion and its covariance
   * block to G R Gᵀ, G the inverse of the position block of H there (R mapped back to metres);
   * cross terms with other states are cleared, other states left alone. Without a reported
   * height the fix is placed at the prior's up (0 for a horizontal state), which keeps its value
   * and variance. False (nothing changed) for a non-finite fix or R, or a singular block.
   */
  initializeInPlace(y: Float64Array, R: Float64Array, x: Float64Array, P: Float64Array): boolean {
    const k = this.dim;
    for (let i = 0; i < k * k; i++) if (!Number.isFinite(R[i]!)) return false;
    const dLat = y[0]! / this.latitudeScaleM;
    const dLon = y[1]! / this.longitudeScaleM;
    const g = this.geo;
    const f = this.frame;
    const targetUp = this.iUp < 0 ? 0 : x[this.iUp]!;
    let h = this.dim === 3 ? y[2]! : f.hM + targetUp;
    f.geodeticOffsetToEnuInto(dLat, dLon, h, g);
    // ∂U/∂h is within 1e-5 of 1 over hundreds of km, so each step gains about five digits.
    for (let step = 0; k === 2 && step < HEIGHT_STEPS; step++) {
      h += targetUp - g[2]!;
      f.geodeticOffsetToEnuInto(dLat, dLon, h, g);
    }
    if (!Number.isFinite(g[0]! + g[1]! + g[2]!)) return false;
    const e = g[0]!, nn = g[1]!, u = g[2]!;
    f.geodeticOffsetJacobianInto(dLat, dLon, h, this.jac);
    this.scaleRows();
    if (!invertInto(this.jac, k, this.gain)) return false;
    const ids = this.positionIds;
    const n = this.stateDim;
    const G = this.gain;
    for (let a = 0; a < k; a++) {
      const ia = ids[a]!;
      for (let c = 0; c < n; c++) { P[ia * n + c] = 0; P[c * n + ia] = 0; }
    }
    for (let a = 0; a < k; a++) {
      for (let b = a; b < k; b++) {
        let s = 0;
        for (let r = 0; r < k; r++) {
          for (let c = 0; c < k; c++) s += G[a * 3 + r]! * 0.5 * (R[r * k + c]! + R[c * k + r]!) * G[b * 3 + c]!;
        }
        P[ids[a]! * n + ids[b]!] = s;
        P[ids[b]! * n + ids[a]!] = s;
      }
    }
    x[this.iEast] = e;
    x[this.iNorth] = nn;
    if (k === 3) x[this.iUp] = u;
    return true;
  }

  /** this.jac = scaled ∂(φ, λ, h)/∂(E, N, U) at the state's position. */
  private scaledJacobianAt(x: Float64Array): void {
    const g = this.geo;
    this.frame.enuToGeodeticOffsetInto(x[this.iEast]!, x[this.iNorth]!, this.iUp < 0 ? 0 : x[this.iUp]!, g);
    this.frame.geodeticOffsetJacobianInto(g[0]!, g[1]!, g[2]!, this.jac);
    this.scaleRows();
  }

  private scaleRows(): void {
    const j = this.jac;
    for (let c = 0; c < 3; c++) { j[c] = j[c]! * this.latitudeScaleM; j[3 + c] = j[3 + c]! * this.longitudeScaleM; }
  }
}

/** Inverse of the leading k×k block (k = 2 or 3) of a 3×3 row-major a into out (same layout); false when singular. */
function invertInto(a: Float64Array, k: number, out: Float64Array): boolean {
  if (k === 2) {
    const det = a[0]! * a[4]! - a[1]! * a[3]!;
    if (!(Math.abs(det) > 0) || !Number.isFinite(det)) return false;
    out[0] = a[4]! / det; out[1] = -a[1]! / det; out[3] = -a[3]! / det; out[4] = a[0]! / det;
    return true;
  }
  const a0 = a[0]!, a1 = a[1]!, a2 = a[2]!, a3 = a[3]!, a4 = a[4]!, a5 = a[5]!, a6 = a[6]!, a7 = a[7]!, a8 = a[8]!;
  const c0 = a4 * a8 - a5 * a7, c1 = a5 * a6 - a3 * a8, c2 = a3 * a7 - a4 * a6;
  const det = a0 * c0 + a1 * c1 + a2 * c2;
  if (!(Math.abs(det) > 0) || !Number.isFinite(det)) return false;
  out[0] = c0 / det; out[1] = (a2 * a7 - a1 * a8) / det; out[2] = (a1 * a5 - a2 * a4) / det;
  out[3] = c1 / det; out[4] = (a0 * a8 - a2 * a6) / det; out[5] = (a2 * a3 - a0 * a5) / det;
  out[6] = c2 / det; out[7] = (a1 * a6 - a0 * a7) / det; out[8] = (a0 * a4 - a1 * a3) / det;
  return true;
}
