/**
 * Approximate confidence intervals of maximum-likelihood estimates from the curvature of ℓ at
 * the maximum: the inverse of the observed information (the negative Hessian) approximates the
 * estimates' covariance (Fisher's asymptotic normality of the maximum-likelihood estimate; e.g.
 * Pawitan, In All Likelihood, 2001; from memory).
 *
 * The parameters are positive, so the curvature is taken in u = log θ, where ℓ is closer to
 * quadratic and an interval exp(û ± z σ_u) stays positive and is asymmetric in θ as it should be.
 */
import { CholeskyDecomposition, Matrix } from 'ml-matrix';

/** Settings for `curvatureIntervals`. */
export interface CurvatureOptions {
  /** Finite-difference step in u = log θ (default 5e-3, i.e. 0.5 % of θ). */
  readonly step?: number;
  /** Two-sided normal quantile (default 1.959964: 95 %). */
  readonly z?: number;
}

/** Intervals per parameter, in θ units, or why there are none. */
export type CurvatureResult =
  | {
      readonly ok: true;
      /** Standard errors of log θ. */
      readonly sigmaLog: Float64Array;
      readonly lower: Float64Array;
      readonly upper: Float64Array;
      /** Correlation matrix of the log-parameter estimates (row-major). */
      readonly correlation: Float64Array;
      readonly evaluations: number;
    }
  | {
      readonly ok: false;
      /** `not-a-maximum`: the negative Hessian is not positive definite (ℓ flat or not at a peak). */
      readonly reason: 'not-a-maximum' | 'not-finite';
      readonly evaluations: number;
    };

/**
 * The observed information −∂²ℓ/∂u∂uᵀ at u by central second differences: diagonal terms
 * (ℓ(u+h) − 2ℓ(u) + ℓ(u−h))/h², off-diagonal terms from the four corners ±hᵢ, ±hⱼ, whose error
 * is O(h²) like the diagonal's. Costs 1 + 2n + 2n(n−1) evaluations.
 */
export function observedInformation(logLikelihood: (u: Float64Array) => number, u: ArrayLike<number>, step = 5e-3): Float64Array {
  const n = u.length;
  const at = (di: number, si: number, dj: number, sj: number): number => {
    const v = Float64Array.from(u);
    if (di >= 0) v[di] = v[di]! + si * step;
    if (dj >= 0) v[dj] = v[dj]! + sj * step;
    return logLikelihood(v);
  };
  const centre = at(-1, 0, -1, 0);
  const info = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    info[i * n + i] = -(at(i, 1, -1, 0) - 2 * centre + at(i, -1, -1, 0)) / (step * step);
    for (let j = 0; j < i; j++) {
      const d = at(i, 1, j, 1) - at(i, 1, j, -1) - at(i, -1, j, 1) + at(i, -1, j, -1);
      info[i * n + j] = info[j * n + i] = -d / (4 * step * step);
    }
  }
  return info;
}

/**
 * Intervals θ̂·exp(±z σ_u) with σ_u² the diagonal of the inverted observed information at
 * û = log θ̂. `logLikelihood` takes log-parameters.
 */
export function curvatureIntervals(
  logLikelihood: (u: Float64Array) => number,
  uHat: ArrayLike<number>,
  options: CurvatureOptions = {},
): CurvatureResult {
  const n = uHat.length;
  const z = options.z ?? 1.959964;
  let evaluations = 0;
  const counted = (u: Float64Array): number => {
    evaluations += 1;
    return logLikelihood(u);
  };
  const info = observedInformation(counted, uHat, options.step ?? 5e-3);
  if (!info.every(Number.isFinite)) return { ok: false, reason: 'not-finite', evaluations };
  const rows = Array.from({ length: n }, (_, i) => Array.from(info.subarray(i * n, i * n + n)));
  const cholesky = new CholeskyDecomposition(new Matrix(rows));
  if (!cholesky.isPositiveDefinite()) return { ok: false, reason: 'not-a-maximum', evaluations };
  const cov = cholesky.solve(Matrix.eye(n));
  const sigmaLog = Float64Array.from({ length: n }, (_, i) => Math.sqrt(cov.get(i, i)));
  const correlation = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) correlation[i * n + j] = cov.get(i, j) / (sigmaLog[i]! * sigmaLog[j]!);
  const theta = Float64Array.from(uHat, Math.exp);
  return {
    ok: true,
    sigmaLog,
    lower: theta.map((t, i) => t * Math.exp(-z * sigmaLog[i]!)),
    upper: theta.map((t, i) => t * Math.exp(z * sigmaLog[i]!)),
    correlation,
    evaluations,
  };
}
