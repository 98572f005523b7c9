/**
 * Cholesky-type square root L·Lᵀ = a that also accepts positive semi-definite matrices.
 *
 * A covariance may be legitimately singular (a state known exactly, a perfectly correlated
 * pair); sigma points need a square root all the same. A pivot that is at most tol times its
 * own diagonal entry is taken as zero and its column below is zeroed. Comparing each pivot with
 * its own diagonal, not with the largest one, keeps the test invariant to the units of each
 * state (a variance of 1e6 m² next to one of 1e-8 rad² is not treated as singular).
 */

/**
 * Lower-triangular L with a ≈ L·Lᵀ into out (n×n, upper part zeroed). Returns false when a is
 * not finite or not positive semi-definite beyond the tolerance (a pivot below −tol·a_ii, or a
 * nonzero remainder in the column of a zero pivot).
 */
export function semidefiniteCholeskyInto(a: Float64Array, n: number, out: Float64Array, tol = 1e-10): boolean {
  for (let i = 0; i < n; i++) {
    const aii = a[i * n + i]!;
    if (!Number.isFinite(aii) || aii < 0) return false;
    for (let j = 0; j <= i; j++) {
      let s = a[i * n + j]!;
      if (!Number.isFinite(s)) return false;
      for (let k = 0; k < j; k++) s -= out[i * n + k]! * out[j * n + k]!;
      if (i === j) {
        if (s < -tol * aii) return false;
        out[i * n + i] = s > tol * aii ? Math.sqrt(s) : 0;
      } else {
        const ljj = out[j * n + j]!;
        if (ljj === 0) {
          // The remaining covariance with a (numerically) zero-variance direction is bounded by
          // Cauchy–Schwarz: |s| ≤ √(remaining var_i · remaining var_j) ≤ √(a_ii · tol · a_jj).
          const bound = 2 * Math.sqrt(aii * tol * a[j * n + j]!);
          if (Math.abs(s) > bound) return false;
          out[i * n + j] = 0;
        } else {
          out[i * n + j] = s / ljj;
        }
      }
    }
    for (let j = i + 1; j < n; j++) out[i * n + j] = 0;
  }
  return true;
}
