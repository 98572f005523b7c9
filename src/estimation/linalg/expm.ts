/**
 * Matrix exponential e^A by Padé approximation with scaling and squaring, following
 * N. J. Higham, "The scaling and squaring method for the matrix exponential revisited",
 * SIAM J. Matrix Anal. Appl. 26(4), 2005, Algorithm 2.3: the lowest Padé degree m ∈ {3, 5, 7, 9}
 * whose θm bounds ‖A‖₁ (Table 2.3), otherwise degree 13 after scaling A by 2^−s so that
 * ‖A/2^s‖₁ ≤ θ13, then s squarings. Setup time only: it allocates.
 */
import { matMulInto, identity } from './multiply.js';
import { luFactorInto, luSolveInPlace } from './lu.js';

/** Higham (2005) Table 2.3: largest ‖A‖₁ for which degree m has backward error ≤ 2^−53. */
const THETA: ReadonlyArray<readonly [number, number]> = [
  [3, 1.495585217958292e-2],
  [5, 2.539398330063230e-1],
  [7, 9.504178996162932e-1],
  [9, 2.097847961257068e0],
];
const THETA_13 = 5.371920351148152e0;

/** Padé coefficients b0..bm of the [m/m] approximant of e^x (Higham 2005, eq. 2.2 and §2). */
const PADE: Readonly<Record<number, readonly number[]>> = {
  3: [120, 60, 12, 1],
  5: [30240, 15120, 3360, 420, 30, 1],
  7: [17297280, 8648640, 1995840, 277200, 25200, 1512, 56, 1],
  9: [17643225600, 8821612800, 2075673600, 302702400, 30270240, 2162160, 110880, 3960, 90, 1],
  13: [
    64764752532480000, 32382376266240000, 7771770303897600, 1187353796428800, 129060195264000,
    10559470521600, 670442572800, 33522128640, 1323241920, 40840800, 960960, 16380, 182, 1,
  ],
};

function norm1(a: Float64Array, n: number): number {
  let best = 0;
  for (let j = 0; j < n; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += Math.abs(a[i * n + j]!);
    // NaN must win so that a non-finite input is detected.
    if (!(s <= best)) best = s;
  }
  return best;
}

function mul(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n * n);
  matMulInto(a, b, n, n, n, out);
  return out;
}

/** Σ cᵢ·Mᵢ over the given terms, as a new n×n array. */
function combine(n: number, terms: ReadonlyArray<readonly [number, Float64Array]>): Float64Array {
  const out = new Float64Array(n * n);
  for (const [c, m] of terms) for (let k = 0; k < n * n; k++) out[k]! += c * m[k]!;
  return out;
}

/** Solves (V − U)·R = V + U for the Padé approximant R; null when V − U is singular. */
function padeQuotient(u: Float64Array, v: Float64Array, n: number): Float64Array | null {
  const den = new Float64Array(n * n);
  const num = new Float64Array(n * n);
  for (let k = 0; k < n * n; k++) {
    den[k] = v[k]! - u[k]!;
    num[k] = v[k]! + u[k]!;
  }
  const pivots = new Int32Array(n);
  if (!luFactorInto(den, n, den, pivots)) return null;
  luSolveInPlace(den, pivots, n, num, n);
  return num;
}

/** U and V of the degree-m approximant, m ≤ 9, from the even powers of A (Higham 2005, eq. 2.3). */
function padeLow(a: Float64Array, n: number, m: number): [Float64Array, Float64Array] {
  const b = PADE[m]!;
  const even: Float64Array[] = [identity(n)];
  for (let j = 1; 2 * j <= m - 1; j++) even.push(j === 1 ? mul(a, a, n) : mul(even[j - 1]!, even[1]!, n));
  const odd = combine(n, even.map((p, j) => [b[2 * j + 1]!, p] as const));
  const v = combine(n, even.map((p, j) => [b[2 * j]!, p] as const));
  return [mul(a, odd, n), v];
}

/** U and V of the degree-13 approximant with Higham's (2005) eq. 2.4 grouping (6 products). */
function pade13(a: Float64Array, n: number): [Float64Array, Float64Array] {
  const b = PADE[13]!;
  const eye = identity(n);
  const a2 = mul(a, a, n);
  const a4 = mul(a2, a2, n);
  const a6 = mul(a4, a2, n);
  const uInner = mul(a6, combine(n, [[b[13]!, a6], [b[11]!, a4], [b[9]!, a2]]), n);
  const uSum = combine(n, [[1, uInner], [b[7]!, a6], [b[5]!, a4], [b[3]!, a2], [b[1]!, eye]]);
  const vInner = mul(a6, combine(n, [[b[12]!, a6], [b[10]!, a4], [b[8]!, a2]]), n);
  const v = combine(n, [[1, vInner], [b[6]!, a6], [b[4]!, a4], [b[2]!, a2], [b[0]!, eye]]);
  return [mul(a, uSum, n), v];
}

/**
 * e^a for a row-major n×n matrix, as a new array. A non-finite input gives an array of NaN and
 * a result too large for float64 has infinite entries, rather than an exception: callers check
 * finiteness.
 */
export function expm(a: Float64Array, n: number): Float64Array {
  const nan = (): Float64Array => new Float64Array(n * n).fill(NaN);
  const norm = norm1(a, n);
  if (!Number.isFinite(norm)) return nan();
  for (const [m, theta] of THETA) {
    if (norm <= theta) return padeQuotient(...padeLow(a, n, m), n) ?? nan();
  }
  const s = Math.max(0, Math.ceil(Math.log2(norm / THETA_13)));
  const scaled = combine(n, [[2 ** -s, a]]);
  let r = padeQuotient(...pade13(scaled, n), n);
  if (r === null) return nan();
  for (let k = 0; k < s; k++) r = mul(r, r, n);
  return r;
}
