/**
 * The straight-line PSD test against the loop version it unrolls (isPositiveSemidefinite), on
 * definite, singular, slightly and clearly indefinite matrices, and against eigenvalues.
 */
import { describe, expect, it } from 'vitest';
import { isPositiveSemidefinite } from '../../../src/estimation/linalg/cholesky.js';
import { psdTestSource } from '../../../src/estimation/linalg/psd-test-source.js';
import { minEigenvalue } from '../../../src/estimation/linalg/symmetric.js';
import { randomCovariance, seededRandom, sparseMatrix } from '../filters/random-matrices.js';

/** Compiles the emitted test into a function of the flat matrix (true: accepted). */
function compiledTest(n: number): (a: Float64Array) => boolean {
  const loads: string[] = [];
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) loads.push(`const a_${i}_${j} = a[${i * n + j}];`);
  return new Function('a', `${loads.join('\n')}\n${psdTestSource('a', n, 'return false;')}\nreturn true;`) as (a: Float64Array) => boolean;
}

/** B Bᵀ for a random n×k B (rank ≤ k), so singular when k < n. */
function lowRank(rand: () => number, n: number, k: number): Float64Array {
  const b = sparseMatrix(rand, n, k, 0.9);
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
    let s = 0;
    for (let t = 0; t < k; t++) s += b[i * k + t]! * b[j * k + t]!;
    out[i * n + j] = s;
  }
  return out;
}

describe('psdTestSource', () => {
  it('decides exactly as isPositiveSemidefinite on random definite, singular and indefinite matrices', () => {
    const rand = seededRandom(17);
    let accepted = 0;
    let refused = 0;
    for (let trial = 0; trial < 400; trial++) {
      const n = 1 + Math.floor(rand() * 7);
      const kind = trial % 4;
      const a = kind === 0 ? randomCovariance(rand, n, 0.1) : lowRank(rand, n, Math.max(1, n - 1 - (trial % 3)));
      // Shift the diagonal down by a random amount: some stay PSD, some do not.
      if (kind >= 2) {
        const shift = (kind === 2 ? 1e-9 : 0.5) * rand();
        for (let i = 0; i < n; i++) a[i * n + i] = a[i * n + i]! - shift;
      }
      const expected = isPositiveSemidefinite(a, n, new Float64Array(n * n));
      expect(compiledTest(n)(a)).toBe(expected);
      if (expected) accepted++;
      else refused++;
    }
    // Both outcomes occur, so the comparison says something about each.
    expect(accepted).toBeGreaterThan(50);
    expect(refused).toBeGreaterThan(50);
  });

  it('refuses a matrix with a clearly negative eigenvalue and accepts the zero matrix', () => {
    const a = Float64Array.of(1, 2, 2, 1); // eigenvalues 3 and −1
    expect(minEigenvalue(a, 2)).toBeLessThan(-0.9);
    expect(compiledTest(2)(a)).toBe(false);
    expect(compiledTest(3)(new Float64Array(9))).toBe(true);
    expect(compiledTest(2)(Float64Array.of(0, 0, 0, -1))).toBe(false);
  });

  it('accepts a singular covariance with a zero-variance state and refuses a nonzero covariance with it', () => {
    expect(compiledTest(2)(Float64Array.of(0, 0, 0, 4))).toBe(true);
    expect(compiledTest(2)(Float64Array.of(0, 1, 1, 4))).toBe(false);
  });
});
