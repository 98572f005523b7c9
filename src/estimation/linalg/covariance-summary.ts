/**
 * Scalar and per-axis summaries of an n×n row-major covariance, for health reports and metrics.
 * Both read only the diagonal, so they allocate nothing and never fail: a negative variance
 * (a broken covariance) shows up as NaN in its sigma rather than being hidden.
 */

/** Trace of the n×n row-major matrix P: the sum of the state variances (units² mixed by state). */
export function traceOf(P: Float64Array, n: number): number {
  let sum = 0;
  for (let i = 0; i < n; i++) sum += P[i * n + i]!;
  return sum;
}

/**
 * Writes the standard deviations √P_ii of the n×n row-major covariance P into out[0..n).
 * A negative or NaN variance gives NaN in that slot (Math.sqrt semantics).
 */
export function sigmasInto(P: Float64Array, n: number, out: Float64Array): void {
  for (let i = 0; i < n; i++) out[i] = Math.sqrt(P[i * n + i]!);
}
