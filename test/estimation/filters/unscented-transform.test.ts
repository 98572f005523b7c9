import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Matrix } from 'ml-matrix';
import {
  UnscentedWorkspace,
  sigmaPointsInto,
  unscentedTransformInto,
  type UnscentedMap,
} from '../../../src/estimation/filters/unscented-transform.js';
import { wrapAngle } from '../../../src/estimation/measurements/measurement-model.js';

function expectClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) {
    expect(Math.abs(actual[i]! - expected[i]!), `entry ${i}: ${actual[i]} vs ${expected[i]}`).toBeLessThanOrEqual(tol);
  }
}

/** A fixed linear-plus-offset map R² → R³, used to check that the UT of a linear map is exact. */
const C = [[1, 2], [-0.5, 3], [0.25, 0]];
const offset = [1, -2, 0.5];
const affine: UnscentedMap = {
  dim: 3,
  measureInto(x, y) {
    for (let r = 0; r < 3; r++) y[r] = C[r]![0]! * x[0]! + C[r]![1]! * x[1]! + offset[r]!;
  },
};

describe('UnscentedWorkspace', () => {
  it('computes λ and the weights of the scaled transform from (α, β, κ)', () => {
    // n = 2, α = 0.5, κ = 1: λ = 0.25·3 − 2 = −1.25, n + λ = 0.75 (worked by hand from
    // Julier 2002's definitions): W^m_0 = −5/3, W^c_0 = −5/3 + 1 − 0.25 + 2 = 13/12, W_i = 2/3.
    const uws = new UnscentedWorkspace(2, 1, { alpha: 0.5, beta: 2, kappa: 1 });
    expect(uws.lambda).toBeCloseTo(-1.25, 14);
    expect(uws.weightMean0).toBeCloseTo(-5 / 3, 14);
    expect(uws.weightCovariance0).toBeCloseTo(13 / 12, 14);
    expect(uws.weight).toBeCloseTo(2 / 3, 14);
    expect(uws.count).toBe(5);
  });

  it('has mean weights that sum to one for any valid parameters', () => {
    fc.assert(fc.property(
      fc.integer({ min: 1, max: 6 }),
      fc.double({ min: 1e-3, max: 1, noNaN: true }),
      fc.double({ min: 0, max: 3, noNaN: true }),
      (n, alpha, kappa) => {
        const uws = new UnscentedWorkspace(n, 1, { alpha, beta: 2, kappa });
        const sum = uws.weightMean0 + 2 * n * uws.weight;
        expect(Math.abs(sum - 1)).toBeLessThan(1e-9 * Math.max(1, Math.abs(uws.weightMean0)));
      },
    ));
  });

  it('rejects alpha outside (0, 1]', () => {
    expect(() => new UnscentedWorkspace(2, 1, { alpha: 0, beta: 2, kappa: 0 })).toThrow(/alpha/);
    expect(() => new UnscentedWorkspace(2, 1, { alpha: 1.5, beta: 2, kappa: 0 })).toThrow(/alpha/);
    expect(() => new UnscentedWorkspace(2, 1, { alpha: Number.NaN, beta: 2, kappa: 0 })).toThrow(/alpha/);
  });

  it('rejects a kappa that makes n + λ non-positive', () => {
    expect(() => new UnscentedWorkspace(2, 1, { alpha: 1, beta: 2, kappa: -2 })).toThrow(/n \+ lambda/);
    expect(() => new UnscentedWorkspace(2, 1, { alpha: 1, beta: 2, kappa: -3 })).toThrow(/n \+ lambda/);
  });

  it('rejects dimensions that are not positive integers', () => {
    expect(() => new UnscentedWorkspace(0, 1, { alpha: 1, beta: 2, kappa: 0 })).toThrow(/state dimension/);
    expect(() => new UnscentedWorkspace(2, 1.5, { alpha: 1, beta: 2, kappa: 0 })).toThrow(/output dimension/);
  });
});

describe('sigmaPointsInto', () => {
  it('places the points at μ ± columns of chol((n + λ)P)', () => {
    // P = [[4, 2], [2, 5]]: chol(P) = [[2, 0], [1, 2]]; with α = 1, κ = 1, n + λ = 3.
    const uws = new UnscentedWorkspace(2, 1, { alpha: 1, beta: 0, kappa: 1 });
    const ok = sigmaPointsInto(Float64Array.of(1, -1), Float64Array.of(4, 2, 2, 5), uws);
    expect(ok).toBe(true);
    const r3 = Math.sqrt(3);
    expectClose(uws.sigmaPoints, [
      1, -1,
      1 + 2 * r3, -1 + r3,
      1, -1 + 2 * r3,
      1 - 2 * r3, -1 - r3,
      1, -1 - 2 * r3,
    ], 1e-14);
  });

  it('accepts a singular covariance (a state known exactly)', () => {
    const uws = new UnscentedWorkspace(2, 1, { alpha: 1, beta: 0, kappa: 1 });
    expect(sigmaPointsInto(Float64Array.of(0, 0), Float64Array.of(0, 0, 0, 2), uws)).toBe(true);
    for (let i = 0; i < uws.count; i++) expect(uws.sigmaPoints[i * 2]).toBe(0);
  });

  it('keeps a tiny variance next to a large one (the singularity test is per state, not global)', () => {
    // tug-02: position variance 1e6 m² beside a heading variance of 1e-8 rad².
    const uws = new UnscentedWorkspace(2, 1, { alpha: 1, beta: 0, kappa: 1 });
    expect(sigmaPointsInto(Float64Array.of(0, 0), Float64Array.of(1e6, 0, 0, 1e-8), uws)).toBe(true);
    expect(uws.sigmaPoints[2 * 2 + 1]! / Math.sqrt(3e-8)).toBeCloseTo(1, 12);
  });

  it('refuses a covariance that is not positive semi-definite', () => {
    const uws = new UnscentedWorkspace(2, 1, { alpha: 1, beta: 0, kappa: 1 });
    expect(sigmaPointsInto(Float64Array.of(0, 0), Float64Array.of(1, 2, 2, 1), uws)).toBe(false);
    expect(sigmaPointsInto(Float64Array.of(0, 0), Float64Array.of(1, Number.NaN, Number.NaN, 1), uws)).toBe(false);
  });
});

describe('unscentedTransformInto', () => {
  it('is exact for an affine map, for any valid parameters', () => {
    const mean = Float64Array.of(0.3, -1.2);
    const cov = Float64Array.of(2, 0.6, 0.6, 0.5);
    // Independent reference: C μ + b and C P Cᵀ by ml-matrix.
    const Cm = new Matrix(C);
    const expMean = Cm.mmul(Matrix.columnVector([...mean])).to1DArray().map((v, r) => v + offset[r]!);
    const expCov = Cm.mmul(new Matrix([[2, 0.6], [0.6, 0.5]])).mmul(Cm.transpose()).to1DArray();
    for (const p of [{ alpha: 1, beta: 0, kappa: 1 }, { alpha: 1e-3, beta: 2, kappa: 0 }, { alpha: 0.5, beta: 2, kappa: 1 }]) {
      const uws = new UnscentedWorkspace(2, 3, p);
      const m = new Float64Array(3);
      const S = new Float64Array(9);
      expect(unscentedTransformInto(affine, mean, cov, uws, m, S)).toBe(true);
      const tol = p.alpha < 1e-2 ? 1e-7 : 1e-12;
      expectClose(m, expMean, tol);
      expectClose(S, expCov, tol);
    }
  });

  it('averages a wrapped angle on the circle when the points straddle ±π', () => {
    // θ ~ N(π − 0.02, 0.1²) observed as wrap(θ): the mean must sit near +π, not near 0.
    const heading: UnscentedMap = {
      dim: 1,
      measureInto(x, y) { y[0] = wrapAngle(x[0]!); },
      innovationInto(y, yhat, nu) { nu[0] = wrapAngle(y[0]! - yhat[0]!); },
    };
    const uws = new UnscentedWorkspace(1, 1, { alpha: 1, beta: 0, kappa: 2 });
    const m = new Float64Array(1);
    const S = new Float64Array(1);
    expect(unscentedTransformInto(heading, Float64Array.of(Math.PI - 0.02), Float64Array.of(0.01), uws, m, S)).toBe(true);
    // For the identity on the circle the UT is exact: mean π − 0.02, variance 0.01.
    expect(m[0]!).toBeCloseTo(Math.PI - 0.02, 12);
    expect(S[0]!).toBeCloseTo(0.01, 12);
  });

  it('wraps a mean that crosses +π back into (−π, π]', () => {
    // y = wrap(θ + b²) with θ ~ N(π − 0.01, 0.01), b ~ N(0, 0.04): E[θ + b²] = π − 0.01 + 0.04,
    // which the UT reproduces exactly (it matches second moments); wrapped, −π + 0.03. The
    // centre point maps to π − 0.01, so only the final wrap brings the mean across.
    const skewed: UnscentedMap = {
      dim: 1,
      measureInto(x, y) { y[0] = wrapAngle(x[0]! + x[1]! * x[1]!); },
      innovationInto(y, yhat, nu) { nu[0] = wrapAngle(y[0]! - yhat[0]!); },
    };
    const uws = new UnscentedWorkspace(2, 1, { alpha: 1, beta: 0, kappa: 1 });
    const m = new Float64Array(1);
    const S = new Float64Array(1);
    expect(unscentedTransformInto(skewed, Float64Array.of(Math.PI - 0.01, 0), Float64Array.of(0.01, 0, 0, 0.04), uws, m, S)).toBe(true);
    expect(m[0]!).toBeCloseTo(-Math.PI + 0.03, 12);
  });

  it('refuses a covariance that is not positive semi-definite', () => {
    const uws = new UnscentedWorkspace(2, 3, { alpha: 1, beta: 0, kappa: 1 });
    const ok = unscentedTransformInto(affine, Float64Array.of(0, 0), Float64Array.of(1, 0, 0, -1), uws, new Float64Array(3), new Float64Array(9));
    expect(ok).toBe(false);
  });
});
