/**
 * Cholesky factorization and solves for small symmetric positive-definite matrices.
 * Used for the innovation covariance S so that no explicit inverse is ever formed.
 */

/**
 * Lower-triangular L with a = L·Lᵀ, written into out (n×n, upper part zeroed).
 * Returns false when a is not numerically positive definite (a non-positive or non-finite pivot).
 */
export function choleskyInto(a: Float64Array, n: number, out: Float64Array): boolean {
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i * n + j]!;
      for (let k = 0; k < j; k++) s -= out[i * n + k]! * out[j * n + k]!;
      if (i === j) {
        // `!(s > 0)` also catches NaN.
        if (!(s > 0)) return false;
        out[i * n + i] = Math.sqrt(s);
      } else {
        out[i * n + j] = s / out[j * n + j]!;
      }
    }
    for (let j = i + 1; j < n; j++) out[i * n + j] = 0;
  }
  return true;
}

/** Solves L·y = b in place on b (forward substitution); b has `cols` right-hand sides stored row-major (n×cols). */
export function forwardSubstituteInPlace(l: Float64Array, n: number, b: Float64Array, cols: number): void {
  for (let c = 0; c < cols; c++) {
    for (let i = 0; i < n; i++) {
      let s = b[i * cols + c]!;
      for (let k = 0; k < i; k++) s -= l[i * n + k]! * b[k * cols + c]!;
      b[i * cols + c] = s / l[i * n + i]!;
    }
  }
}

/** Solves Lᵀ·x = y in place on y (back substitution); y has `cols` right-hand sides (n×cols). */
export function backSubstituteTransposedInPlace(l: Float64Array, n: number, y: Float64Array, cols: number): void {
  for (let c = 0; c < cols; c++) {
    for (let i = n - 1; i >= 0; i--) {
      let s = y[i * cols + c]!;
      for (let k = i + 1; k < n; k++) s -= l[k * n + i]! * y[k * cols + c]!;
      y[i * cols + c] = s / l[i * n + i]!;
    }
  }
}

/** Solves (L·Lᵀ)·X = B in place on B (n×cols). */
export function choleskySolveInPlace(l: Float64Array, n: number, b: Float64Array, cols: number): void {
  forwardSubstituteInPlace(l, n, b, cols);
  backSubstituteTransposedInPlace(l, n, b, cols);
}

/**
 * νᵀ (L·Lᵀ)⁻¹ ν, the normalized innovation squared, using `scratch` (length n) for L⁻¹ν.
 * The whitened innovation L⁻¹ν is left in scratch (its components are the innovation ratios
 * only when S is diagonal; callers that need per-component ratios use the diagonal of S).
 */
export function mahalanobisSquared(l: Float64Array, n: number, nu: Float64Array, scratch: Float64Array): number {
  let d2 = 0;
  for (let i = 0; i < n; i++) {
    let s = nu[i]!;
    for (let k = 0; k < i; k++) s -= l[i * n + k]! * scratch[k]!;
    const w = s / l[i * n + i]!;
    scratch[i] = w;
    d2 += w * w;
  }
  return d2;
}

/**
 * True when the symmetric matrix a is finite and positive semi-definite, tested by a Cholesky
 * factorization into scratch (n×n) that accepts pivots down to −tol·max(diag) and treats
 * pivots below tol·max(diag) as zero (a state known exactly has zero variance, legitimately).
 */
export function isPositiveSemidefinite(a: Float64Array, n: number, scratch: Float64Array, tol = 1e-10): boolean {
  let scale = 0;
  for (let i = 0; i < n; i++) {
    const d = a[i * n + i]!;
    if (!Number.isFinite(d)) return false;
    if (d > scale) scale = d;
  }
  if (scale === 0) return allZeroOrFinite(a, n);
  const eps = tol * scale;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = a[i * n + j]!;
      if (!Number.isFinite(s)) return false;
      for (let k = 0; k < j; k++) s -= scratch[i * n + k]! * scratch[j * n + k]!;
      if (i === j) {
        if (s < -eps) return false;
        scratch[i * n + i] = s > eps ? Math.sqrt(s) : 0;
      } else {
        const ljj = scratch[j * n + j]!;
        if (ljj === 0) {
          // A zero pivot forces the rest of its column to vanish for a PSD matrix.
          if (Math.abs(s) > Math.sqrt(eps * scale)) return false;
          scratch[i * n + j] = 0;
        } else {
          scratch[i * n + j] = s / ljj;
        }
      }
    }
  }
  return true;
}

function allZeroOrFinite(a: Float64Array, n: number): boolean {
  for (let i = 0; i < n * n; i++) if (a[i] !== 0) return false;
  return true;
}
