/**
 * LU factorization with partial (row) pivoting and the matching solve, for small dense square
 * systems at setup time (the Padé denominator in expm). P·A = L·U with L unit lower triangular;
 * both factors share one row-major buffer, as in Golub & Van Loan, "Matrix Computations"
 * (4th ed. 2013), Algorithm 3.4.1.
 */

/**
 * Factors a (n×n) into lu (n×n; may alias a) and the row permutation into pivots (length n):
 * pivots[k] is the row swapped with row k at step k. Returns false when a pivot is zero or not
 * finite (a singular or non-finite matrix); lu is then incomplete.
 */
export function luFactorInto(a: Float64Array, n: number, lu: Float64Array, pivots: Int32Array): boolean {
  if (lu !== a) lu.set(a.subarray(0, n * n));
  for (let k = 0; k < n; k++) {
    let p = k;
    let best = Math.abs(lu[k * n + k]!);
    for (let i = k + 1; i < n; i++) {
      const v = Math.abs(lu[i * n + k]!);
      if (v > best) {
        best = v;
        p = i;
      }
    }
    // `!(best > 0)` also catches NaN; Infinity would poison the elimination.
    if (!(best > 0) || !Number.isFinite(best)) return false;
    pivots[k] = p;
    if (p !== k) {
      for (let j = 0; j < n; j++) {
        const t = lu[k * n + j]!;
        lu[k * n + j] = lu[p * n + j]!;
        lu[p * n + j] = t;
      }
    }
    const pivot = lu[k * n + k]!;
    for (let i = k + 1; i < n; i++) {
      const l = (lu[i * n + k]! /= pivot);
      if (l === 0) continue;
      for (let j = k + 1; j < n; j++) lu[i * n + j]! -= l * lu[k * n + j]!;
    }
  }
  return true;
}

/** Solves A·X = B in place on b (n×cols, row-major) from the factors of luFactorInto. */
export function luSolveInPlace(lu: Float64Array, pivots: Int32Array, n: number, b: Float64Array, cols: number): void {
  for (let k = 0; k < n; k++) {
    const p = pivots[k]!;
    if (p === k) continue;
    for (let c = 0; c < cols; c++) {
      const t = b[k * cols + c]!;
      b[k * cols + c] = b[p * cols + c]!;
      b[p * cols + c] = t;
    }
  }
  for (let c = 0; c < cols; c++) {
    for (let i = 1; i < n; i++) {
      let s = b[i * cols + c]!;
      for (let k = 0; k < i; k++) s -= lu[i * n + k]! * b[k * cols + c]!;
      b[i * cols + c] = s;
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = b[i * cols + c]!;
      for (let k = i + 1; k < n; k++) s -= lu[i * n + k]! * b[k * cols + c]!;
      b[i * cols + c] = s / lu[i * n + i]!;
    }
  }
}
