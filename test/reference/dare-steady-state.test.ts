/**
 * Reference check C5 of /work/shared/REFERENCE-CHECKS.md: the covariance the filter converges to
 * for a general 2-state model solves the discrete algebraic Riccati equation (DARE)
 * P = FPFᵀ − FPHᵀ(HPHᵀ + R)⁻¹HPFᵀ + Q. Sources, as named there: Anderson & Moore, "Optimal
 * Filtering" (1979), ch. 4 (steady state / DARE; from memory); scipy.linalg.solve_discrete_are
 * documentation (whose solve_discrete_are(Fᵀ, Hᵀ, Q, R) is the prior P⁻).
 * Tolerance: abs 1e-10 (as tabled); the step-50 prior equals the converged one to 1e-12.
 */
import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { kalmanUpdateInPlace } from '../../src/estimation/filters/kalman-update.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { DiscreteModel } from '../../src/estimation/models/discrete-model.js';
import { expectAbsClose, expectAllAbsClose, expectExactlySymmetric, tri } from './reference-asserts.js';

// C5 setup.
const F = [[0.9, 0.2], [-0.1, 0.8]];
const Q = [[0.5, 0.1], [0.1, 0.3]];
const H = [1, 0.5];
const R = 0.4;
const TOL = 1e-10;
const STEPS = 300;

interface Step {
  readonly priorP: Float64Array;
  readonly posteriorP: Float64Array;
  readonly S: number;
  readonly gain: Float64Array;
}

/** Runs the kernels from P0 = I (the posterior at k = 0): step k predicts to P⁻_k, then updates. */
function run(): Step[] {
  const process = new DiscreteModel({ A: F, Q, stepS: 1 });
  const sensor = new LinearMeasurement({ C: H, dim: 1, stateDim: 2, Rv: [R] });
  const ws = new FilterWorkspace(2, 1);
  const x = Float64Array.of(0, 0);
  const P = Float64Array.of(1, 0, 0, 1);
  const steps: Step[] = [];
  for (let k = 1; k <= STEPS; k++) {
    if (!kalmanPredictInPlace(process, 1, x, P, ws)) throw new Error(`prediction ${k} failed`);
    const priorP = Float64Array.from(P);
    // The covariance sequence does not depend on the readings.
    const verdict = kalmanUpdateInPlace(sensor, Float64Array.of(Math.sin(k)), sensor.R, Infinity, x, P, ws);
    if (verdict !== 'applied') throw new Error(`update ${k}: ${verdict}`);
    steps.push({ priorP, posteriorP: Float64Array.from(P), S: ws.S[0]!, gain: ws.K.slice(0, 2) });
  }
  return steps;
}

const steps = run();
const at = (k: number): Step => steps[k - 1]!;
const converged = at(STEPS);
const square = (P: ArrayLike<number>): Matrix => new Matrix([[P[0]!, P[1]!], [P[2]!, P[3]!]]);

describe('DARE steady state of a general 2-state filter (C5)', () => {
  it('follows the tabled P⁻_k sequence from P0 = I at k = 1, 2, 5, 10', () => {
    // REFERENCE-CHECKS C5, "P⁻_k from P0 = I" rows (Anderson & Moore 1979 ch. 4, from memory).
    expectAllAbsClose(tri(at(1).priorP), [1.35, 0.17, 0.95], TOL, 'tri(P⁻_1)');
    expectAllAbsClose(tri(at(2).priorP), [0.757441483198, 0.004245654693, 0.829986558517], TOL, 'tri(P⁻_2)');
    expectAllAbsClose(tri(at(5).priorP), [0.710757863268, 0.038325322916, 0.737450461382], TOL, 'tri(P⁻_5)');
    expectAllAbsClose(tri(at(10).priorP), [0.709613902940, 0.043922627137, 0.709668008865], TOL, 'tri(P⁻_10)');
  });

  it('has converged to 1e-12 by k = 50', () => {
    // REFERENCE-CHECKS C5: "… at k = 50 equals P⁻ to 1e-12".
    expectAllAbsClose(at(50).priorP, converged.priorP, 1e-12, 'P⁻_50 − P⁻_∞');
  });

  it('converges to the tabled P⁻, S, K and P⁺', () => {
    // REFERENCE-CHECKS C5 (scipy solve_discrete_are convention: the prior).
    expectAllAbsClose(converged.priorP, [0.709546035741, 0.044286938749, 0.044286938749, 0.707712379348], TOL, 'P⁻');
    expectAbsClose(converged.S, 1.330761069328, TOL, 'S');
    expectAllAbsClose(converged.gain, [0.549827855639, 0.299184532521], TOL, 'K');
    expectAllAbsClose(converged.posteriorP, [0.30724276415, -0.174623243789, -0.174623243789, 0.588594113595], TOL, 'P⁺');
  });

  it('converges to the tabled traces tr P⁻ = 1.417258415090 and tr P⁺ = 0.895836877745', () => {
    expectAbsClose(converged.priorP[0]! + converged.priorP[3]!, 1.41725841509, TOL, 'tr P⁻');
    expectAbsClose(converged.posteriorP[0]! + converged.posteriorP[3]!, 0.895836877745, TOL, 'tr P⁺');
  });

  it('solves the DARE: FPFᵀ − FPHᵀ(HPHᵀ + R)⁻¹HPFᵀ + Q − P vanishes for the converged prior', () => {
    // Independent plain evaluation of the DARE residual with ml-matrix.
    const P = square(converged.priorP);
    const f = new Matrix(F);
    const h = new Matrix([H]);
    const s = h.mmul(P).mmul(h.transpose()).get(0, 0) + R;
    const fph = f.mmul(P).mmul(h.transpose());
    const rhs = f.mmul(P).mmul(f.transpose()).sub(fph.mmul(fph.transpose()).div(s)).add(new Matrix(Q));
    expectAllAbsClose(rhs.sub(P).to1DArray(), [0, 0, 0, 0], 1e-13, 'DARE residual');
  });

  it('keeps every prior and posterior exactly symmetric and positive definite', () => {
    for (const [k, s] of steps.entries()) {
      for (const [name, P] of [['P⁻', s.priorP], ['P⁺', s.posteriorP]] as const) {
        expectExactlySymmetric(P, 2, `${name}_${k + 1}`);
        expect(P[0]!, `${name}_${k + 1} P11`).toBeGreaterThan(0);
        expect(P[0]! * P[3]! - P[1]! * P[2]!, `${name}_${k + 1} det`).toBeGreaterThan(0);
      }
    }
  });

  it('has a stable error dynamics (I − KH)F with the tabled eigenvalues 0.292378690227, 0.760756912968', () => {
    // Eigenvalues by ml-matrix, independent of the filter code.
    const K = new Matrix([[converged.gain[0]!], [converged.gain[1]!]]);
    const closedLoop = Matrix.eye(2).sub(K.mmul(new Matrix([H]))).mmul(new Matrix(F));
    const eig = new EigenvalueDecomposition(closedLoop);
    const re = [...eig.realEigenvalues].sort((a, b) => a - b);
    expectAllAbsClose(eig.imaginaryEigenvalues, [0, 0], 1e-12, 'imaginary parts');
    expectAllAbsClose(re, [0.292378690227, 0.760756912968], TOL, 'eig((I − KH)F)');
    for (const v of re) expect(Math.abs(v)).toBeLessThan(1);
  });
});
