/**
 * Reference checks C7 of /work/shared/REFERENCE-CHECKS.md (Van Loan discretization), absolute
 * tolerance 1e-12. Sources, as named there:
 * - C. F. Van Loan, "Computing integrals involving the matrix exponential", IEEE Trans. AC 23(3), 1978, pp. 395–404.
 * - CV/CA closed forms: Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to Tracking and
 *   Navigation" (2001), §6.2 (CWNA, Wiener-process acceleration) and §6.3 (DWNA) (from memory).
 * - Gauss–Markov Q and Van Loan's method: Brown & Hwang, "Introduction to Random Signals and Applied
 *   Kalman Filtering" (4th ed. 2012), ch. 3 (from memory).
 */
import { describe, it, expect } from 'vitest';
import { discretizeVanLoan } from '../../src/estimation/models/van-loan.js';
import { ConstantVelocityModel } from '../../src/estimation/models/constant-velocity-model.js';
import { ContinuousModel } from '../../src/estimation/models/continuous-model.js';
import { DiscreteModel } from '../../src/estimation/models/discrete-model.js';
import { matMulInto, matMulTransBInto, matAddInto } from '../../src/estimation/linalg/multiply.js';
import { expectCloseToMatrix, maxAbsDiff } from '../estimation/models/close-to-matrix.js';

const f64 = (v: number[]): Float64Array => Float64Array.from(v);

describe('Van Loan discretization (C7)', () => {
  it('gives the CWNA constant-velocity step for q = 2, T = 0.5', () => {
    // C7 "CV (CWNA)": Van Loan 1978; closed form Bar-Shalom, Li, Kirubarajan 2001 §6.2 (from memory).
    const { A, Q } = discretizeVanLoan(f64([0, 1, 0, 0]), f64([0, 1]), f64([2]), 2, 1, 0.5);
    expectCloseToMatrix(A, [1, 0.5, 0, 1], 1e-12);
    expectCloseToMatrix(Q, [1 / 12, 0.25, 0.25, 1], 1e-12);
  });

  it('gives the white-jerk constant-acceleration step for q = 2, T = 0.5', () => {
    // C7 "CA (white jerk)": Van Loan 1978; closed form Bar-Shalom, Li, Kirubarajan 2001 §6.2 (from memory).
    const F = f64([0, 1, 0, 0, 0, 1, 0, 0, 0]);
    const { A, Q } = discretizeVanLoan(F, f64([0, 0, 1]), f64([2]), 3, 1, 0.5);
    expectCloseToMatrix(A, [1, 0.5, 0.125, 0, 1, 0.5, 0, 0, 1], 1e-12);
    expectCloseToMatrix(Q, [0.003125, 0.015625, 1 / 24, 0.015625, 1 / 12, 0.25, 1 / 24, 0.25, 1], 1e-12);
  });

  it('gives the first-order Gauss–Markov step for τ = 2, q = 0.3, T = 0.5', () => {
    // C7 "Gauss–Markov": Brown & Hwang 2012 ch. 3 (from memory).
    const { A, Q } = discretizeVanLoan(f64([-1 / 2]), f64([1]), f64([0.3]), 1, 1, 0.5);
    expect(Math.abs(A[0]! - 0.778800783071405)).toBeLessThanOrEqual(1e-12);
    expect(Math.abs(Q[0]! - 0.11804080208621)).toBeLessThanOrEqual(1e-12);
  });

  it('gives the damped-oscillator step for q = 0.5, T = 0.2', () => {
    // C7 "damped oscillator": Van Loan 1978; values verified by two independent computations.
    const { A, Q } = discretizeVanLoan(f64([0, 1, -4, -0.8]), f64([0, 1]), f64([0.5]), 2, 1, 0.2);
    expectCloseToMatrix(A, [0.9250970696147, 0.1799330795299, -0.7197323181195, 0.7811506059908], 1e-12);
    expectCloseToMatrix(Q, [0.0011477936995, 0.0080939782773, 0.0080939782773, 0.0813437744762], 1e-12);
  });

  it('returns an exactly symmetric Q', () => {
    const { Q } = discretizeVanLoan(f64([0, 1, -4, -0.8]), f64([0, 1]), f64([0.5]), 2, 1, 0.2);
    expect(Q[1]).toBe(Q[2]);
  });

  it('gives A = I and Q = 0 for dt = 0', () => {
    const { A, Q } = discretizeVanLoan(f64([0, 1, -4, -0.8]), f64([0, 1]), f64([0.5]), 2, 1, 0);
    expect(Array.from(A)).toEqual([1, 0, 0, 1]);
    expect(Array.from(Q)).toEqual([0, 0, 0, 0]);
  });

  it('gives NaN for a negative dt', () => {
    const { A, Q } = discretizeVanLoan(f64([0, 1, 0, 0]), f64([0, 1]), f64([1]), 2, 1, -0.1);
    expect([...A, ...Q].every(Number.isNaN)).toBe(true);
  });
});

/** F Q Fᵀ + Q for 2×2 matrices: predicting twice over the same step. */
function twoSteps(F: Float64Array, Q: Float64Array): Float64Array {
  const fq = new Float64Array(4);
  const out = new Float64Array(4);
  matMulInto(F, Q, 2, 2, 2, fq);
  matMulTransBInto(fq, F, 2, 2, 2, out);
  matAddInto(out, Q, 4, out);
  return out;
}

describe('irregular-dt composition (C7)', () => {
  it('composes CWNA exactly: two steps of 0.6 equal one of 1.2 (q = 0.5)', () => {
    // C7 irregular-dt property; expected Q(1.2) = [[0.288, 0.36], [0.36, 0.6]] from the table.
    const cv = new ConstantVelocityModel({ positionNames: ['level'], velocityNames: ['level_rate'], spectralDensity: 0.5 });
    const A = new Float64Array(4);
    const Q = new Float64Array(4);
    cv.discretizeInto(0.6, A, Q);
    const composed = twoSteps(A, Q);
    cv.discretizeInto(1.2, A, Q);
    expectCloseToMatrix(Q, [0.288, 0.36, 0.36, 0.6], 1e-12);
    expectCloseToMatrix(composed, [0.288, 0.36, 0.36, 0.6], 1e-12);
  });

  it('composes CWNA through the general Van Loan model as well', () => {
    const m = new ContinuousModel({ F: [[0, 1], [0, 0]], G: [[0], [1]], Qc: [[0.5]] });
    const A = new Float64Array(4);
    const Q = new Float64Array(4);
    m.discretizeInto(0.6, A, Q);
    const composed = twoSteps(A, Q);
    m.discretizeInto(1.2, A, Q);
    expectCloseToMatrix(composed, Q, 1e-12);
  });

  it('does not compose DWNA: two steps of 0.6 differ from one of 1.2 (σv² = 0.5)', () => {
    // C7: DWNA Q = σv²ΓΓᵀ, Γ = [T²/2, T]ᵀ (Bar-Shalom, Li, Kirubarajan 2001 §6.3, from memory).
    const dwna = (T: number): DiscreteModel =>
      new DiscreteModel({ A: [[1, T], [0, 1]], B: [[(T * T) / 2], [T]], Q: [[0.5]], stepS: T });
    const A = new Float64Array(4);
    const twoOf06 = new Float64Array(4);
    const oneOf12 = new Float64Array(4);
    dwna(0.6).discretizeInto(1.2, A, twoOf06);
    dwna(1.2).discretizeInto(1.2, A, oneOf12);
    expectCloseToMatrix(twoOf06, [0.162, 0.216, 0.216, 0.36], 1e-12);
    expectCloseToMatrix(oneOf12, [0.2592, 0.432, 0.432, 0.72], 1e-12);
    expect(maxAbsDiff(twoOf06, oneOf12)).toBeGreaterThan(0.09);
  });
});
