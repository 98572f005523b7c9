import { describe, it, expect } from 'vitest';
import { sigmasInto, traceOf } from '../../../src/estimation/linalg/covariance-summary.js';

// A 3×3 covariance for tank-a's [level m, inflow m/s, outflow m/s] state, row-major.
const P = Float64Array.of(0.04, 0.001, 0, 0.001, 0.0009, 0.0002, 0, 0.0002, 0.0025);

describe('traceOf', () => {
  it('sums the diagonal only', () => {
    expect(traceOf(P, 3)).toBeCloseTo(0.04 + 0.0009 + 0.0025, 15);
  });

  it('reads the leading n×n block layout, not the first n entries', () => {
    // With n = 2 the diagonal is P[0] and P[3] of a 2×2 matrix stored as [a, b, c, d].
    expect(traceOf(Float64Array.of(1, 7, 7, 2), 2)).toBe(3);
  });
});

describe('sigmasInto', () => {
  it('writes the square roots of the variances', () => {
    const out = new Float64Array(3);
    sigmasInto(P, 3, out);
    expect(out[0]).toBeCloseTo(0.2, 15);
    expect(out[1]).toBeCloseTo(0.03, 15);
    expect(out[2]).toBeCloseTo(0.05, 15);
  });

  it('reports a negative variance as NaN instead of hiding it', () => {
    const out = new Float64Array(2);
    sigmasInto(Float64Array.of(4, 0, 0, -1e-9), 2, out);
    expect(out[0]).toBe(2);
    expect(out[1]).toBeNaN();
  });
});
