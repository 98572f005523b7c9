import { describe, expect, it } from 'vitest';
import { curvatureIntervals, observedInformation } from '../../../src/tools/tune/curvature-intervals.js';
import { nisConsistency } from '../../../src/tools/tune/nis-consistency.js';

// ℓ(u) = −½ (u − a)ᵀ A (u − a): the information is A exactly, and central differences are
// exact for a quadratic up to rounding. A⁻¹ = [[2, −1], [−1, 4]]/7.
const a = [Math.log(0.002), Math.log(0.15)];
const A = [[4, 1], [1, 2]];
const quadratic = (u: Float64Array): number => {
  const d0 = u[0]! - a[0]!;
  const d1 = u[1]! - a[1]!;
  return -0.5 * (A[0]![0]! * d0 * d0 + 2 * A[0]![1]! * d0 * d1 + A[1]![1]! * d1 * d1);
};

describe('observedInformation', () => {
  it('recovers the curvature matrix of a quadratic', () => {
    const info = observedInformation(quadratic, a);
    expect(Array.from(info).map((v) => Number(v.toFixed(6)))).toEqual([4, 1, 1, 2]);
  });
});

describe('curvatureIntervals', () => {
  it('gives σ of log θ from the inverted information and θ·exp(±1.96σ)', () => {
    const r = curvatureIntervals(quadratic, a);
    if (!r.ok) throw new Error('expected intervals');
    expect(r.sigmaLog[0]).toBeCloseTo(Math.sqrt(2 / 7), 6);
    expect(r.sigmaLog[1]).toBeCloseTo(Math.sqrt(4 / 7), 6);
    expect(r.lower[0]).toBeCloseTo(0.002 * Math.exp(-1.959964 * Math.sqrt(2 / 7)), 8);
    expect(r.upper[1]).toBeCloseTo(0.15 * Math.exp(1.959964 * Math.sqrt(4 / 7)), 6);
  });

  it('gives the correlation of the estimates', () => {
    const r = curvatureIntervals(quadratic, a);
    if (!r.ok) throw new Error('expected intervals');
    // −1/7 / √(2/7 · 4/7) = −1/√8.
    expect(r.correlation[1]).toBeCloseTo(-1 / Math.sqrt(8), 6);
  });

  it('costs 1 + 2n + 2n(n − 1) likelihood evaluations', () => {
    const r = curvatureIntervals(quadratic, a);
    expect(r.evaluations).toBe(9);
  });

  it('refuses a saddle point as not a maximum', () => {
    const saddle = (u: Float64Array): number => -(u[0]! ** 2) + u[1]! ** 2;
    expect(curvatureIntervals(saddle, [0, 0])).toMatchObject({ ok: false, reason: 'not-a-maximum' });
  });

  it('refuses a likelihood that is not finite beside the point', () => {
    const edge = (u: Float64Array): number => (u[0]! > 0 ? Number.NEGATIVE_INFINITY : -(u[0]! ** 2));
    expect(curvatureIntervals(edge, [0])).toMatchObject({ ok: false, reason: 'not-finite' });
  });
});

describe('nisConsistency', () => {
  it('uses the 95 % band of REFERENCE-CHECKS C2 for m = 1, N = 100', () => {
    // C2: [0.742219, 1.295612] (Bar-Shalom, Li, Kirubarajan 2001, §5.4; from memory).
    const r = nisConsistency(100, 100, 100);
    expect(r.lower).toBeCloseTo(0.742219, 6);
    expect(r.upper).toBeCloseTo(1.295612, 6);
    expect(r.inside).toBe(true);
  });

  it('pools the components of two-dimensional updates (C2, m = 2, N = 50)', () => {
    // C2: [1.484439, 2.591224].
    const r = nisConsistency(50 * 2.7, 50, 100);
    expect([Number(r.lower.toFixed(6)), Number(r.upper.toFixed(6))]).toEqual([1.484439, 2.591224]);
    expect(r.inside).toBe(false);
  });
});
