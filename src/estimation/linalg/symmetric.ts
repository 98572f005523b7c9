/** Checks and repairs for symmetric matrices (covariances). */

/** Replaces a with (a + aᵀ)/2 in place, removing the asymmetry that rounding leaves behind. */
export function symmetrizeInPlace(a: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const m = 0.5 * (a[i * n + j]! + a[j * n + i]!);
      a[i * n + j] = m;
      a[j * n + i] = m;
    }
  }
}

/** True when every entry of the first `len` entries is finite. */
export function allFinite(a: ArrayLike<number>, len: number = a.length): boolean {
  for (let i = 0; i < len; i++) if (!Number.isFinite(a[i]!)) return false;
  return true;
}

/** Largest |a_ij − a_ji| relative to the largest |a_ij| (0 for the zero matrix). */
export function asymmetry(a: ArrayLike<number>, n: number): number {
  let maxAbs = 0;
  let maxDiff = 0;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      maxAbs = Math.max(maxAbs, Math.abs(a[i * n + j]!));
      maxDiff = Math.max(maxDiff, Math.abs(a[i * n + j]! - a[j * n + i]!));
    }
  }
  return maxAbs === 0 ? 0 : maxDiff / maxAbs;
}

/**
 * Eigenvalues of a symmetric matrix by cyclic Jacobi rotations (setup-time and checks only:
 * allocates). Returned in ascending order.
 */
export function symmetricEigenvalues(a: ArrayLike<number>, n: number): number[] {
  const m = Float64Array.from({ length: n * n }, (_, k) => a[k]!);
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += m[i * n + j]! ** 2;
    if (off < 1e-30) break;
    for (let p = 0; p < n; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = m[p * n + q]!;
        if (Math.abs(apq) < 1e-300) continue;
        const theta = (m[q * n + q]! - m[p * n + p]!) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = m[k * n + p]!;
          const akq = m[k * n + q]!;
          m[k * n + p] = c * akp - s * akq;
          m[k * n + q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = m[p * n + k]!;
          const aqk = m[q * n + k]!;
          m[p * n + k] = c * apk - s * aqk;
          m[q * n + k] = s * apk + c * aqk;
        }
      }
    }
  }
  const eig: number[] = [];
  for (let i = 0; i < n; i++) eig.push(m[i * n + i]!);
  return eig.sort((x, y) => x - y);
}

/** Smallest eigenvalue of a symmetric matrix (allocates; for validation, not the hot path). */
export function minEigenvalue(a: ArrayLike<number>, n: number): number {
  return n === 0 ? 0 : symmetricEigenvalues(a, n)[0]!;
}
