import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { discretizeVanLoan } from '../../../src/estimation/models/van-loan.js';

const one = (v: number): Float64Array => Float64Array.from([v]);

describe('discretizeVanLoan', () => {
  it('keeps full accuracy when the noise is loud relative to slow dynamics', () => {
    // Scalar Gauss–Markov, closed form σ²(1 − e^(−2T/τ)) (Brown & Hwang 2012 ch. 3, from memory):
    // σ = 100, τ = 0.1 s, T = 1.97 s makes ‖G Qc Gᵀ‖·T ≈ 4e5 against ‖F‖·T ≈ 20.
    const sigma = 100;
    const tauS = 0.1;
    const dtS = 1.97;
    const { A, Q } = discretizeVanLoan(one(-1 / tauS), one(1), one((2 * sigma * sigma) / tauS), 1, 1, dtS);
    expect(Math.abs(A[0]! / Math.exp(-dtS / tauS) - 1)).toBeLessThan(1e-14);
    expect(Math.abs(Q[0]! / (sigma * sigma * -Math.expm1((-2 * dtS) / tauS)) - 1)).toBeLessThan(1e-14);
  });

  it('scales Q linearly with the spectral density', () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-6, max: 1e6, noNaN: true }), (scale) => {
        const F = Float64Array.from([0, 1, -4, -0.8]);
        const G = Float64Array.from([0, 1]);
        const base = discretizeVanLoan(F, G, one(1), 2, 1, 0.3).Q;
        const scaled = discretizeVanLoan(F, G, one(scale), 2, 1, 0.3).Q;
        return base.every((v, k) => Math.abs(scaled[k]! - scale * v) <= 1e-13 * scale * Math.abs(base[3]!));
      }),
      { numRuns: 100 },
    );
  });

  it('gives A = e^{F·T} and Q = 0 for zero noise', () => {
    const { A, Q } = discretizeVanLoan(one(-2), one(1), one(0), 1, 1, 0.5);
    expect(Math.abs(A[0]! - Math.exp(-1))).toBeLessThan(1e-16);
    expect(Q[0]).toBe(0);
  });
});
