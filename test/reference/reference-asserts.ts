/** Tolerance assertions shared by the reference checks (REFERENCE-CHECKS.md, summary of tolerances). */
import { expect } from 'vitest';

/** Asserts |actual − expected| ≤ rel·|expected|, naming the quantity in the failure message. */
export function expectRelClose(actual: number, expected: number, rel: number, label: string): void {
  const error = Math.abs(actual - expected);
  expect(error, `${label}: ${actual} vs ${expected} (relative error ${error / Math.abs(expected)})`)
    .toBeLessThanOrEqual(rel * Math.abs(expected));
}

/** Asserts |actual − expected| ≤ tol, naming the quantity in the failure message. */
export function expectAbsClose(actual: number, expected: number, tol: number, label: string): void {
  const error = Math.abs(actual - expected);
  expect(error, `${label}: ${actual} vs ${expected} (error ${error})`).toBeLessThanOrEqual(tol);
}

/** Entry-wise expectAbsClose over equal-length arrays. */
export function expectAllAbsClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number, label: string): void {
  expect(actual.length, `${label}: length`).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) expectAbsClose(actual[i]!, expected[i]!, tol, `${label}[${i}]`);
}

/** Entry-wise expectRelClose over equal-length arrays. */
export function expectAllRelClose(actual: ArrayLike<number>, expected: ArrayLike<number>, rel: number, label: string): void {
  expect(actual.length, `${label}: length`).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) expectRelClose(actual[i]!, expected[i]!, rel, `${label}[${i}]`);
}

/** (P11, P12, P22) of a flat 2×2 matrix, the "tri(P)" of the reference tables. */
export function tri(P: ArrayLike<number>): [number, number, number] {
  return [P[0]!, P[1]!, P[3]!];
}

/** Asserts a flat n×n matrix is exactly symmetric (the kernels mirror one triangle). */
export function expectExactlySymmetric(P: ArrayLike<number>, n: number, label: string): void {
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) expect(P[i * n + j], `${label}[${i}][${j}] vs [${j}][${i}]`).toBe(P[j * n + i]);
  }
}
