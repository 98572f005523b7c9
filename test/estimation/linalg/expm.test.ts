import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { expm } from '../../../src/estimation/linalg/expm.js';
import { matMulInto } from '../../../src/estimation/linalg/multiply.js';
import { expectCloseToMatrix, maxAbs, maxAbsDiff } from '../models/close-to-matrix.js';

describe('expm', () => {
  it('matches Math.exp for 1×1 matrices across all Padé degrees and scalings', () => {
    // Scalars chosen to land in each branch of Higham (2005) Algorithm 2.3: θ3, θ5, θ7, θ9, θ13, scaled.
    for (const x of [0.01, -0.2, 0.9, 2, -5, 12.5, -40, 60]) {
      const got = expm(new Float64Array([x]), 1)[0]!;
      expect(Math.abs(got / Math.exp(x) - 1)).toBeLessThan(1e-13);
    }
  });

  it('returns the identity for the zero matrix', () => {
    expect(Array.from(expm(new Float64Array(9), 3))).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
  });

  it('turns a rotation generator into cos/sin for several angles', () => {
    // e^{θ[[0, 1], [−1, 0]]} = [[cos θ, sin θ], [−sin θ, cos θ]] (closed form of a skew generator).
    for (const theta of [0.005, 0.3, 1, 2.5, 7, 31]) {
      const r = expm(new Float64Array([0, theta, -theta, 0]), 2);
      const c = Math.cos(theta);
      const s = Math.sin(theta);
      expectCloseToMatrix(r, [c, s, -s, c], 1e-13 * Math.max(1, theta));
    }
  });

  it('gives the truncated series for a nilpotent shift matrix', () => {
    // N³ = 0 for the 3×3 shift, so e^{tN} = I + tN + t²N²/2 exactly.
    for (const t of [0.1, 1, 4, 30]) {
      const r = expm(new Float64Array([0, t, 0, 0, 0, t, 0, 0, 0]), 3);
      expectCloseToMatrix(r, [1, t, (t * t) / 2, 0, 1, t, 0, 0, 1], 1e-13 * Math.max(1, t * t));
    }
  });

  it('exponentiates a diagonal matrix entry by entry', () => {
    const r = expm(new Float64Array([1.5, 0, 0, -7]), 2);
    expect(Math.abs(r[0]! / Math.exp(1.5) - 1)).toBeLessThan(1e-14);
    expect(Math.abs(r[3]! / Math.exp(-7) - 1)).toBeLessThan(1e-13);
    expect(r[1]).toBe(0);
    expect(r[2]).toBe(0);
  });

  it('satisfies e^A · e^−A = I for random matrices', () => {
    const entry = fc.double({ min: -3, max: 3, noNaN: true });
    fc.assert(
      fc.property(fc.array(entry, { minLength: 9, maxLength: 9 }), (vals) => {
        const a = Float64Array.from(vals);
        const neg = a.map((v) => -v);
        const prod = new Float64Array(9);
        const ea = expm(a, 3);
        const ena = expm(neg, 3);
        matMulInto(ea, ena, 3, 3, 3, prod);
        const scale = maxAbs(ea) * maxAbs(ena);
        return maxAbsDiff(prod, [1, 0, 0, 0, 1, 0, 0, 0, 1]) <= 1e-12 * Math.max(1, scale);
      }),
      { numRuns: 200 },
    );
  });

  it('returns NaN entries for a non-finite input', () => {
    const r = expm(new Float64Array([NaN, 0, 0, 1]), 2);
    expect(Array.from(r).every(Number.isNaN)).toBe(true);
  });
});
