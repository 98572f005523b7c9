import { semidefiniteCholeskyInto } from '../linalg/semidefinite-cholesky.js';

/**
 * Scaled unscented transform (Julier, "The scaled unscented transformation", ACC 2002;
 * Wan & van der Merwe, "The unscented Kalman filter for nonlinear estimation", 2000):
 * λ = α²(n + κ) − n, χ0 = μ, χ±i = μ ± column i of chol((n + λ)P),
 * W^m_0 = λ/(n + λ), W^c_0 = W^m_0 + 1 − α² + β, W^m_i = W^c_i = 1/(2(n + λ)).
 */

/** Spread (α), prior-knowledge (β) and secondary scaling (κ) parameters of the scaled UT. */
export interface UnscentedParameters {
  /** Spread of the sigma points around the mean, in (0, 1]; small α keeps them local. */
  readonly alpha: number;
  /** Prior knowledge of the distribution; 2 is optimal for a Gaussian. */
  readonly beta: number;
  /** Secondary scaling; n + κ = 3 matches the fourth moment of a Gaussian. */
  readonly kappa: number;
}

/** A map y = f(x) for the unscented transform; every MeasurementModel is one. */
export interface UnscentedMap {
  /** Output dimension M. */
  readonly dim: number;
  /** f(x) into y (length M). */
  measureInto(x: Float64Array, y: Float64Array): void;
  /** y − yhat into nu, wrapping angular components; plain subtraction when absent. */
  innovationInto?(y: Float64Array, yhat: Float64Array, nu: Float64Array): void;
}

/**
 * Sigma points, weights and scratch for an n-state unscented transform with outputs of at
 * most maxM components, allocated once. Sigma point i is row i of `sigmaPoints`
 * ((2n+1)×n, row 0 the mean, rows 1..n the + side, rows n+1..2n the − side).
 */
export class UnscentedWorkspace {
  readonly n: number;
  readonly maxM: number;
  readonly alpha: number;
  readonly beta: number;
  readonly kappa: number;
  readonly lambda: number;
  /** W^m_0, W^c_0 and the common weight W_i of the other 2n points. */
  readonly weightMean0: number;
  readonly weightCovariance0: number;
  readonly weight: number;
  /** Number of sigma points, 2n + 1. */
  readonly count: number;
  readonly sigmaPoints: Float64Array;
  /** √(n + λ)·chol(P) (n×n, lower); column i is the offset χ+i − μ, exactly. */
  readonly scaledSqrt: Float64Array;
  /** f(χ_i), row i ((2n+1)×maxM). */
  readonly propagated: Float64Array;
  /** Deviations f(χ_i) ⊖ ŷ through innovationInto, row i ((2n+1)×maxM). */
  readonly deviations: Float64Array;
  /** Row i of sigmaPoints as its own array (views made once), handed to f without a copy. */
  readonly pointViews: readonly Float64Array[];
  readonly mA: Float64Array;
  readonly mB: Float64Array;
  readonly mZero: Float64Array;

  /** Allocates every buffer; throws for dimensions or parameters outside their domain. */
  constructor(n: number, maxM: number, params: UnscentedParameters) {
    if (!Number.isInteger(n) || n < 1) throw new Error(`UnscentedWorkspace: state dimension must be a positive integer, got ${n}`);
    if (!Number.isInteger(maxM) || maxM < 1) throw new Error(`UnscentedWorkspace: output dimension must be a positive integer, got ${maxM}`);
    const { alpha, beta, kappa } = params;
    if (!(alpha > 0 && alpha <= 1)) throw new Error(`UnscentedWorkspace: alpha must be in (0, 1], got ${alpha}`);
    if (!Number.isFinite(beta)) throw new Error(`UnscentedWorkspace: beta must be finite, got ${beta}`);
    if (!Number.isFinite(kappa)) throw new Error(`UnscentedWorkspace: kappa must be finite, got ${kappa}`);
    const lambda = alpha * alpha * (n + kappa) - n;
    const c = n + lambda;
    // n + λ = α²(n + κ) scales the covariance whose square root spreads the points.
    if (!(c > 0)) throw new Error(`UnscentedWorkspace: n + lambda must be positive (n + kappa > 0), got ${c}`);
    this.n = n;
    this.maxM = maxM;
    this.alpha = alpha;
    this.beta = beta;
    this.kappa = kappa;
    this.lambda = lambda;
    this.weightMean0 = lambda / c;
    this.weightCovariance0 = lambda / c + 1 - alpha * alpha + beta;
    this.weight = 1 / (2 * c);
    this.count = 2 * n + 1;
    this.sigmaPoints = new Float64Array(this.count * n);
    this.scaledSqrt = new Float64Array(n * n);
    this.propagated = new Float64Array(this.count * maxM);
    this.deviations = new Float64Array(this.count * maxM);
    this.pointViews = Array.from({ length: this.count }, (_, i) => this.sigmaPoints.subarray(i * n, (i + 1) * n));
    this.mA = new Float64Array(maxM);
    this.mB = new Float64Array(maxM);
    this.mZero = new Float64Array(maxM);
  }
}

/**
 * Sigma points of (mean, cov) into uws.sigmaPoints and uws.scaledSqrt. Returns false (and the
 * points are not to be used) when cov is not finite and positive semi-definite.
 */
export function sigmaPointsInto(mean: Float64Array, cov: Float64Array, uws: UnscentedWorkspace): boolean {
  const n = uws.n;
  const L = uws.scaledSqrt;
  if (!semidefiniteCholeskyInto(cov, n, L)) return false;
  // chol((n + λ)P) = √(n + λ)·chol(P): scaling the factor avoids a scaled copy of P.
  const s = Math.sqrt(n + uws.lambda);
  for (let k = 0; k < n * n; k++) L[k] = L[k]! * s;
  const X = uws.sigmaPoints;
  for (let j = 0; j < n; j++) X[j] = mean[j]!;
  for (let i = 0; i < n; i++) {
    const plus = (1 + i) * n;
    const minus = (1 + n + i) * n;
    for (let j = 0; j < n; j++) {
      const d = L[j * n + i]!;
      X[plus + j] = mean[j]! + d;
      X[minus + j] = mean[j]! - d;
    }
  }
  for (let k = 0; k < X.length; k++) if (!Number.isFinite(X[k]!)) return false;
  return true;
}

/** a ⊖ b through the map's innovation (wrapping angles), or plain subtraction. */
function differenceInto(f: UnscentedMap, a: Float64Array, b: Float64Array, out: Float64Array): void {
  if (f.innovationInto !== undefined) f.innovationInto(a, b, out);
  else for (let r = 0; r < f.dim; r++) out[r] = a[r]! - b[r]!;
}

/**
 * Propagates the current sigma points through f and writes the weighted mean into meanOut,
 * leaving f(χ_i) in uws.propagated and the deviations f(χ_i) ⊖ ŷ in uws.deviations.
 *
 * The mean is taken as ŷ = Y0 ⊕ Σ W^m_i (Y_i ⊖ Y0) (Σ W^m = 1), so angular components average
 * on the circle: points straddling ±π give a mean near ±π, not near 0. The result is brought
 * back to the model's range by ŷ ⊖ 0, which wraps angles and leaves other components alone.
 */
export function propagateSigmaPointsInto(f: UnscentedMap, uws: UnscentedWorkspace, meanOut: Float64Array): void {
  const m = f.dim;
  const mm = uws.maxM;
  const views = uws.pointViews;
  const Y = uws.propagated;
  const dY = uws.deviations;
  const a = uws.mA;
  const b = uws.mB;
  for (let i = 0; i < uws.count; i++) {
    f.measureInto(views[i]!, a);
    for (let r = 0; r < m; r++) Y[i * mm + r] = a[r]!;
  }
  for (let r = 0; r < m; r++) b[r] = Y[r]!;
  for (let r = 0; r < m; r++) meanOut[r] = 0;
  for (let i = 1; i < uws.count; i++) {
    for (let r = 0; r < m; r++) a[r] = Y[i * mm + r]!;
    differenceInto(f, a, b, dY);
    for (let r = 0; r < m; r++) meanOut[r] = meanOut[r]! + uws.weight * dY[r]!;
  }
  for (let r = 0; r < m; r++) a[r] = b[r]! + meanOut[r]!;
  differenceInto(f, a, uws.mZero, meanOut);
  for (let i = 0; i < uws.count; i++) {
    for (let r = 0; r < m; r++) a[r] = Y[i * mm + r]!;
    differenceInto(f, a, meanOut, b);
    for (let r = 0; r < m; r++) dY[i * mm + r] = b[r]!;
  }
}

/**
 * Σ W^c_i ΔY_i ΔY_iᵀ from uws.deviations into covOut (m×m), computed on the upper triangle and
 * mirrored so the result is exactly symmetric.
 */
export function deviationCovarianceInto(m: number, uws: UnscentedWorkspace, covOut: Float64Array): void {
  const mm = uws.maxM;
  const dY = uws.deviations;
  for (let r = 0; r < m; r++) {
    for (let c = r; c < m; c++) {
      let s = uws.weightCovariance0 * dY[r]! * dY[c]!;
      for (let i = 1; i < uws.count; i++) s += uws.weight * dY[i * mm + r]! * dY[i * mm + c]!;
      covOut[r * m + c] = s;
      covOut[c * m + r] = s;
    }
  }
}

/**
 * Unscented transform of N(mean, cov) through f: the mean (length f.dim) and covariance
 * (f.dim × f.dim) of f(x) into meanOut and covOut. Returns false when cov is not PSD or the
 * result is not finite; the outputs are then not to be used.
 */
export function unscentedTransformInto(
  f: UnscentedMap,
  mean: Float64Array,
  cov: Float64Array,
  uws: UnscentedWorkspace,
  meanOut: Float64Array,
  covOut: Float64Array,
): boolean {
  const m = f.dim;
  if (m > uws.maxM) throw new Error(`unscentedTransformInto: output dimension ${m} exceeds the workspace's ${uws.maxM}`);
  if (!sigmaPointsInto(mean, cov, uws)) return false;
  propagateSigmaPointsInto(f, uws, meanOut);
  deviationCovarianceInto(m, uws, covOut);
  for (let r = 0; r < m; r++) if (!Number.isFinite(meanOut[r]!)) return false;
  for (let k = 0; k < m * m; k++) if (!Number.isFinite(covOut[k]!)) return false;
  return true;
}
