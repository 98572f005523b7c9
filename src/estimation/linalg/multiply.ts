/**
 * Dense products on row-major Float64Array matrices. Every function writes into a caller-owned
 * buffer (`...Into`) so the hot path allocates nothing; outputs must not alias inputs.
 */

/** out (r×c) = a (r×k) · b (k×c). */
export function matMulInto(a: Float64Array, b: Float64Array, r: number, k: number, c: number, out: Float64Array): void {
  for (let i = 0; i < r; i++) {
    const ai = i * k;
    const oi = i * c;
    for (let j = 0; j < c; j++) {
      let s = 0;
      for (let t = 0; t < k; t++) s += a[ai + t]! * b[t * c + j]!;
      out[oi + j] = s;
    }
  }
}

/** out (r×c) = a (r×k) · bᵀ where b is (c×k). */
export function matMulTransBInto(a: Float64Array, b: Float64Array, r: number, k: number, c: number, out: Float64Array): void {
  for (let i = 0; i < r; i++) {
    const ai = i * k;
    const oi = i * c;
    for (let j = 0; j < c; j++) {
      const bj = j * k;
      let s = 0;
      for (let t = 0; t < k; t++) s += a[ai + t]! * b[bj + t]!;
      out[oi + j] = s;
    }
  }
}

/** out (r) = a (r×c) · v (c). */
export function matVecInto(a: Float64Array, v: Float64Array, r: number, c: number, out: Float64Array): void {
  for (let i = 0; i < r; i++) {
    let s = 0;
    const ai = i * c;
    for (let j = 0; j < c; j++) s += a[ai + j]! * v[j]!;
    out[i] = s;
  }
}

/** out (n×n) = a (n×n) + b (n×n); out may alias a or b. */
export function matAddInto(a: Float64Array, b: Float64Array, len: number, out: Float64Array): void {
  for (let i = 0; i < len; i++) out[i] = a[i]! + b[i]!;
}

/** Returns the n×n identity as a new array (setup time only). */
export function identity(n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) out[i * n + i] = 1;
  return out;
}

/** out (c×r) = aᵀ where a is (r×c). */
export function transposeInto(a: Float64Array, r: number, c: number, out: Float64Array): void {
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) out[j * r + i] = a[i * c + j]!;
}
