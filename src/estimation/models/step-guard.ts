/**
 * The two edge cases every process model answers the same way: a step of zero (A = I, Q = 0, as
 * the ProcessModel contract requires) and an unusable step (negative or non-finite dtS), which is
 * the caller's error. The core does not throw on the hot path, so an unusable step writes NaN:
 * the filter's finiteness check then turns it into a verdict instead of a silently wrong estimate.
 */

/** True when dtS is a step a model can discretize: finite and ≥ 0. */
export function isUsableStepS(dtS: number): boolean {
  return dtS >= 0 && dtS < Infinity;
}

/** Writes A = I and Q = 0 (both n×n) for a zero step. */
export function writeIdentityStepInto(n: number, A: Float64Array, Q: Float64Array): void {
  A.fill(0, 0, n * n);
  Q.fill(0, 0, n * n);
  for (let i = 0; i < n; i++) A[i * n + i] = 1;
}

/** Writes NaN into A and Q (both n×n) for an unusable step. */
export function writeNaNStepInto(n: number, A: Float64Array, Q: Float64Array): void {
  A.fill(NaN, 0, n * n);
  Q.fill(NaN, 0, n * n);
}
