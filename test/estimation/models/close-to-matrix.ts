/** Tolerance assertions for flat row-major matrices used by the process-model tests. */
import { expect } from 'vitest';

/** Largest |a[k] − b[k]| over the entries; Infinity when the lengths differ or an entry is NaN. */
export function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  if (a.length !== b.length) return Infinity;
  let worst = 0;
  for (let k = 0; k < a.length; k++) {
    const d = Math.abs(a[k]! - b[k]!);
    if (!(d <= worst)) worst = d;
  }
  return worst;
}

/** Largest |entry| of a matrix (the scale for relative tolerances). */
export function maxAbs(a: ArrayLike<number>): number {
  let m = 0;
  for (let k = 0; k < a.length; k++) m = Math.max(m, Math.abs(a[k]!));
  return m;
}

/** Asserts entry-wise |actual − expected| ≤ tol (absolute), with the lengths equal. */
export function expectCloseToMatrix(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  expect(maxAbsDiff(actual, expected)).toBeLessThanOrEqual(tol);
}
