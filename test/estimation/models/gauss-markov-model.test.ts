import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { GaussMarkovModel } from '../../../src/estimation/models/gauss-markov-model.js';
import { agrees, stepOf, vanLoanDiagonal } from './van-loan-reference.js';

describe('GaussMarkovModel', () => {
  it('has one state named bias by default', () => {
    expect(new GaussMarkovModel({ tauS: 60, sigma: 0.1 }).stateNames).toEqual(['bias']);
  });

  it('gives the C7 Gauss–Markov step for τ = 2, q = 0.3, T = 0.5', () => {
    // Brown & Hwang 2012 ch. 3 (from memory); q = 2σ²/τ, so σ² = qτ/2 = 0.3.
    const { A, Q } = stepOf(new GaussMarkovModel({ tauS: 2, sigma: Math.sqrt(0.3) }), 0.5);
    expect(Math.abs(A[0]! - 0.778800783071405)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(Q[0]! - 0.11804080208621)).toBeLessThanOrEqual(1e-12);
  });

  it('agrees with Van Loan (q = 2σ²/τ) to 1e-12 for random τ, σ and dt', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 1000, noNaN: true }),
        fc.double({ min: 1e-3, max: 100, noNaN: true }),
        fc.double({ min: 0, max: 50, noNaN: true }),
        (tauS, sigma, dtS) => {
          const m = new GaussMarkovModel({ tauS, sigma });
          return agrees(stepOf(m, dtS), vanLoanDiagonal([-1 / tauS], [(2 * sigma * sigma) / tauS], dtS), 1e-12);
        },
      ),
      { numRuns: 200 },
    );
  });

  it('approaches the steady-state variance σ² for a step much longer than τ', () => {
    const { A, Q } = stepOf(new GaussMarkovModel({ tauS: 1, sigma: 0.4 }), 100);
    expect(A[0]!).toBeLessThan(1e-40);
    expect(Math.abs(Q[0]! - 0.16)).toBeLessThan(1e-15);
  });

  it('keeps Q accurate for a step far shorter than τ', () => {
    // σ²(1 − e^(−2T/τ)) ≈ 2σ²T/τ when T ≪ τ; plain 1 − exp would lose most digits here.
    const { Q } = stepOf(new GaussMarkovModel({ tauS: 1e6, sigma: 1 }), 1e-6);
    expect(Math.abs(Q[0]! / 2e-12 - 1)).toBeLessThan(1e-10);
  });

  it('holds independent states with their own τ and σ on the diagonal', () => {
    const m = new GaussMarkovModel({ stateNames: ['bias_a', 'bias_b'], tauS: [1, 4], sigma: [1, 2] });
    const { A, Q } = stepOf(m, 2);
    expect(A[1]).toBe(0);
    expect(Q[2]).toBe(0);
    expect(Math.abs(A[3]! - Math.exp(-0.5))).toBeLessThan(1e-15);
    expect(Math.abs(Q[3]! - 4 * (1 - Math.exp(-1)))).toBeLessThan(1e-15);
  });

  it('rejects a non-positive time constant', () => {
    expect(() => new GaussMarkovModel({ tauS: -1, sigma: 1 })).toThrow('tauS must be a positive finite number, got -1');
  });

  it('rejects an infinite sigma', () => {
    expect(() => new GaussMarkovModel({ tauS: 1, sigma: Infinity })).toThrow(
      'sigma must be a positive finite number, got Infinity',
    );
  });
});
