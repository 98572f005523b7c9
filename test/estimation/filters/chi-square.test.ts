import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import {
  chiSquareCdf,
  chiSquareQuantile,
  chiSquareSurvival,
  logGamma,
  regularizedLowerGamma,
  regularizedUpperGamma,
} from '../../../src/estimation/filters/chi-square.js';
import { erfc } from '../../../src/estimation/filters/normal-distribution.js';

// ---------------------------------------------------------------------------------------------
// Independent reference arithmetic, sharing no code with the implementation: ln Γ at integers and
// half-integers by exact recurrences, and the incomplete gamma of a = k/2 by term-wise sums whose
// terms are each formed from logarithms (Poisson sums for integer a; the erfc identity for
// half-integer a; Abramowitz & Stegun 1964, eqs. 6.5.13 and 26.4.4-26.4.5, from memory).
// ---------------------------------------------------------------------------------------------

const HALF_STEPS = 40_000;
/**
 * LN_GAMMA_HALF[j] = ln Γ(j/2) for j = 1..HALF_STEPS, by Γ(z + 1) = zΓ(z) from Γ(1) and Γ(1/2),
 * summed with Neumaier's compensation so that thousands of additions do not drift.
 */
const LN_GAMMA_HALF = new Float64Array(HALF_STEPS + 1);
for (const start of [1, 2]) {
  let sum = start === 1 ? 0.5 * Math.log(Math.PI) : 0;
  let compensation = 0;
  LN_GAMMA_HALF[start] = sum;
  for (let j = start + 2; j <= HALF_STEPS; j += 2) {
    const term = Math.log((j - 2) / 2);
    const t = sum + term;
    compensation += Math.abs(sum) >= Math.abs(term) ? sum - t + term : term - t + sum;
    sum = t;
    LN_GAMMA_HALF[j] = sum + compensation;
  }
}

function lnGammaHalf(a: number): number {
  const j = Math.round(2 * a);
  if (j < 1 || j > HALF_STEPS || j !== 2 * a) throw new Error(`reference lnΓ needs a = j/2, got ${a}`);
  return LN_GAMMA_HALF[j]!;
}

/** P(a, y) = Σ_{j≥0} e^{−y} y^{a+j}/Γ(a+j+1), every term from logs. */
function referenceLower(a: number, y: number): number {
  let sum = 0;
  for (let j = 0; ; j++) {
    const term = Math.exp(-y + (a + j) * Math.log(y) - lnGammaHalf(a + j + 1));
    sum += term;
    if (a + j > y && term < 1e-18 * sum) return sum;
  }
}

/** Q(a, y) for a = k/2: a finite Poisson sum (integer a), or erfc plus a finite sum (half-integer a). */
function referenceUpper(a: number, y: number): number {
  let sum = 0;
  if (Number.isInteger(a)) {
    for (let j = 0; j < a; j++) sum += Math.exp(-y + j * Math.log(y) - lnGammaHalf(j + 1));
    return sum;
  }
  sum = erfc(Math.sqrt(y));
  for (let j = 1; j <= a - 0.5; j++) sum += Math.exp(-y + (j - 0.5) * Math.log(y) - lnGammaHalf(j + 0.5));
  return sum;
}

/** Chi-square density at x for dof k, from the reference ln Γ. */
function referenceDensity(x: number, k: number): number {
  const a = k / 2;
  const y = x / 2;
  return 0.5 * Math.exp((a - 1) * Math.log(y) - y - lnGammaHalf(a));
}

/**
 * First-order relative error of a quantile x for probability p: |F(x) − p|/(x·f(x)), with the
 * residual formed on the tail the probability lives in so that it keeps its digits.
 */
function impliedRelativeError(x: number, p: number, k: number): number {
  const a = k / 2;
  const residual = p <= 0.5 ? referenceLower(a, x / 2) - p : 1 - p - referenceUpper(a, x / 2);
  return Math.abs(residual) / (x * referenceDensity(x, k));
}

function relErr(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}

describe('logGamma', () => {
  it('matches ln((n − 1)!) at integers and ln Γ(n + 1/2) at half-integers', () => {
    for (const a of [0.5, 1, 1.5, 2, 3, 4.5, 10, 25.5, 171, 1000, 5000.5]) {
      const expected = lnGammaHalf(a);
      expect(Math.abs(logGamma(a) - expected)).toBeLessThan(1e-14 * Math.max(1, Math.abs(expected)));
    }
  });

  it('follows ln Γ(a + 1) = ln Γ(a) + ln a below 1/2', () => {
    for (const a of [1e-6, 0.01, 0.25, 0.49]) {
      expect(logGamma(a)).toBeCloseTo(logGamma(a + 1) - Math.log(a), 13);
    }
  });

  it('returns NaN for a ≤ 0 and NaN', () => {
    expect(logGamma(0)).toBeNaN();
    expect(logGamma(-1.5)).toBeNaN();
    expect(logGamma(Number.NaN)).toBeNaN();
  });
});

describe('regularizedLowerGamma', () => {
  it('equals 1 − e^(−x) for a = 1 on both sides of the series/fraction switch', () => {
    // P(1, x) = 1 − e^(−x) in closed form (Abramowitz & Stegun 1964, eq. 6.5.13 with a = 1).
    for (const x of [1e-8, 0.1, 1, 1.999, 2, 2.001, 5, 30]) {
      expect(relErr(regularizedLowerGamma(1, x), -Math.expm1(-x))).toBeLessThan(1e-14);
    }
  });

  it('agrees with the independent term-wise sum for integer and half-integer a', () => {
    for (const a of [0.5, 1.5, 3, 7.5, 50, 500]) {
      for (const yOverA of [0.3, 0.5, 0.9, 1]) {
        const y = a * yOverA;
        // Both sides form e^(a ln y − y) from numbers of size a·|ln y| + y, each rounded to ~ε.
        const tolerance = 1e-13 + 4 * Number.EPSILON * (a * Math.abs(Math.log(y)) + y);
        expect(relErr(regularizedLowerGamma(a, y), referenceLower(a, y))).toBeLessThan(tolerance);
      }
    }
  });

  it('returns 0 at x ≤ 0, 1 at x = Infinity and NaN for a ≤ 0 or NaN x', () => {
    expect(regularizedLowerGamma(2, 0)).toBe(0);
    expect(regularizedLowerGamma(2, -1)).toBe(0);
    expect(regularizedLowerGamma(2, Number.POSITIVE_INFINITY)).toBe(1);
    expect(regularizedLowerGamma(0, 1)).toBeNaN();
    expect(regularizedLowerGamma(2, Number.NaN)).toBeNaN();
  });
});

describe('regularizedUpperGamma', () => {
  it('keeps relative precision deep in the upper tail', () => {
    // Q(1, x) = e^(−x): 1 − P would round to 0 long before x = 700.
    for (const x of [40, 100, 700]) expect(relErr(regularizedUpperGamma(1, x), Math.exp(-x))).toBeLessThan(1e-13);
    for (const a of [2, 5.5, 40]) {
      const y = 6 * a + 30;
      expect(relErr(regularizedUpperGamma(a, y), referenceUpper(a, y))).toBeLessThan(1e-12);
    }
  });

  it('complements the lower function to 1', () => {
    for (const [a, x] of [[0.5, 0.2], [3, 3.5], [3, 5], [200, 190], [200, 215]] as const) {
      expect(regularizedLowerGamma(a, x) + regularizedUpperGamma(a, x)).toBeCloseTo(1, 14);
    }
  });
});

describe('chiSquareCdf and chiSquareSurvival', () => {
  it('match the dof-2 closed form 1 − e^(−x/2)', () => {
    for (const x of [1e-6, 0.5, 3, 9.21, 40]) {
      expect(relErr(chiSquareCdf(x, 2), -Math.expm1(-x / 2))).toBeLessThan(1e-14);
      expect(relErr(chiSquareSurvival(x, 2), Math.exp(-x / 2))).toBeLessThan(1e-13);
    }
  });

  it('return NaN for a non-positive dof', () => {
    expect(chiSquareCdf(1, 0)).toBeNaN();
    expect(chiSquareSurvival(1, -3)).toBeNaN();
  });
});

describe('chiSquareQuantile', () => {
  it('inverts the dof-2 closed form −2 ln(1 − p) to 1e-12 across the range', () => {
    for (const p of [1e-12, 1e-6, 0.01, 0.3, 0.5, 0.7, 0.95, 0.99, 1 - 1e-9, 1 - 1e-14]) {
      // log1p keeps small p exact; 1 − p is exact for p ≥ 0.5.
      const exact = p < 0.5 ? -2 * Math.log1p(-p) : -2 * Math.log(1 - p);
      expect(relErr(chiSquareQuantile(p, 2), exact)).toBeLessThan(1e-12);
    }
  });

  it('hits relative 1e-10 against independent sums for dof 1..10000 and p in [1e-6, 1 − 1e-9]', () => {
    const lowerTail = fc.double({ min: -6, max: Math.log10(0.5), noNaN: true }).map((u) => 10 ** u);
    const upperTail = fc.double({ min: -9, max: Math.log10(0.5), noNaN: true }).map((u) => 1 - 10 ** u);
    const anywhere = fc.double({ min: 1e-6, max: 1 - 1e-9, noNaN: true });
    const dof = fc.oneof(fc.integer({ min: 1, max: 30 }), fc.integer({ min: 1, max: 10_000 }));
    fc.assert(
      fc.property(dof, fc.oneof(lowerTail, upperTail, anywhere), (k, p) => {
        const x = chiSquareQuantile(p, k);
        return x > 0 && impliedRelativeError(x, p, k) < 1e-10;
      }),
      { numRuns: 300, seed: 20240611 },
    );
  });

  it('hits relative 1e-10 at the corners of the required range', () => {
    for (const k of [1, 2, 3, 9999, 10_000]) {
      for (const p of [1e-6, 0.5, 1 - 1e-9]) {
        expect(impliedRelativeError(chiSquareQuantile(p, k), p, k)).toBeLessThan(1e-10);
      }
    }
  });

  it('round-trips through chiSquareCdf', () => {
    for (const k of [1, 4, 17, 300]) {
      for (const p of [1e-5, 0.2, 0.5, 0.8]) expect(relErr(chiSquareCdf(chiSquareQuantile(p, k), k), p)).toBeLessThan(1e-12);
    }
  });

  it('increases with p', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 500 }), fc.double({ min: 1e-6, max: 0.999, noNaN: true }), fc.double({ min: 1e-6, max: 1e-3, noNaN: true }), (k, p, dp) =>
        chiSquareQuantile(p + dp, k) > chiSquareQuantile(p, k),
      ),
      { numRuns: 200, seed: 7 },
    );
  });

  it('accepts a non-integer dof', () => {
    // dof 1 and dof 3 bracket dof 2.5 at every p (the chi-square family is ordered in dof).
    for (const p of [0.05, 0.5, 0.95]) {
      const x = chiSquareQuantile(p, 2.5);
      expect(relErr(chiSquareCdf(x, 2.5), p)).toBeLessThan(1e-12);
      expect(x).toBeGreaterThan(chiSquareQuantile(p, 1));
      expect(x).toBeLessThan(chiSquareQuantile(p, 3));
    }
  });

  it('returns 0 at p = 0, Infinity at p = 1 and NaN for bad arguments', () => {
    expect(chiSquareQuantile(0, 3)).toBe(0);
    expect(chiSquareQuantile(1, 3)).toBe(Number.POSITIVE_INFINITY);
    expect(chiSquareQuantile(-0.1, 3)).toBeNaN();
    expect(chiSquareQuantile(1.1, 3)).toBeNaN();
    expect(chiSquareQuantile(Number.NaN, 3)).toBeNaN();
    expect(chiSquareQuantile(0.5, 0)).toBeNaN();
    expect(chiSquareQuantile(0.5, Number.POSITIVE_INFINITY)).toBeNaN();
  });
});
