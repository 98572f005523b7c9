/** Seeded random matrices for the kernel tests (row-major Float64Array). */

/** A small deterministic generator (xorshift32), uniform in [0, 1). */
export function seededRandom(seed: number): () => number {
  let s = seed >>> 0 || 1;
  return () => {
    s ^= s << 13;
    s >>>= 0;
    s ^= s >>> 17;
    s ^= s << 5;
    s >>>= 0;
    return s / 2 ** 32;
  };
}

/** An r×c matrix with each entry nonzero (uniform in (−2, 2)) with probability density. */
export function sparseMatrix(rand: () => number, r: number, c: number, density: number): Float64Array {
  const out = new Float64Array(r * c);
  for (let k = 0; k < r * c; k++) if (rand() < density) out[k] = 4 * rand() - 2 || 0.5;
  return out;
}

/** B Bᵀ + shift·I for a random n×n B: symmetric, PSD, and PD when shift > 0. */
export function randomCovariance(rand: () => number, n: number, shift: number): Float64Array {
  const b = sparseMatrix(rand, n, n, 0.8);
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let s = i === j ? shift : 0;
      for (let k = 0; k < n; k++) s += b[i * n + k]! * b[j * n + k]!;
      out[i * n + j] = s;
      out[j * n + i] = s;
    }
  }
  return out;
}

/** A random vector of length n, entries uniform in (−5, 5). */
export function randomVector(rand: () => number, n: number): Float64Array {
  return Float64Array.from({ length: n }, () => 10 * rand() - 5);
}

/** Largest |a_k − b_k| divided by max(1, largest |b_k|). */
export function relativeError(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let scale = 1;
  for (let k = 0; k < b.length; k++) scale = Math.max(scale, Math.abs(b[k]!));
  let worst = a.length === b.length ? 0 : Infinity;
  for (let k = 0; k < b.length; k++) {
    const d = Math.abs(a[k]! - b[k]!);
    if (!(d <= worst)) worst = d;
  }
  return worst / scale;
}
