import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, Matrix, inverse, solve } from 'ml-matrix';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { FixedLagSmoother } from '../../src/estimation/filters/fixed-lag-smoother.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { kalmanUpdateInPlace } from '../../src/estimation/filters/kalman-update.js';
import { smoothBatch, type SmootherStep } from '../../src/estimation/filters/rts-smoother.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import type { ProcessModel } from '../../src/estimation/models/process-model.js';

// Reference values: /work/shared/REFERENCE-CHECKS.md, check C8. Sources: Rauch, Tung, Striebel,
// "Maximum likelihood estimates of linear dynamic systems", AIAA J. 3(8), 1965; equivalence with
// batch MAP and the fixed-lag definition: Särkkä, Bayesian Filtering and Smoothing (2013),
// ch. 8–10 (from memory). The scenario: the level of tank-a (state [level, level_rate]).

function expectClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) {
    expect(Math.abs(actual[i]! - expected[i]!), `entry ${i}: ${actual[i]} vs ${expected[i]}`).toBeLessThanOrEqual(tol);
  }
}

const T = 1;
const q = 0.5;
/** CWNA constant velocity: A = [[1, T], [0, 1]], Q = q[[T³/3, T²/2], [T²/2, T]]. */
const cwna: ProcessModel = {
  dim: 2,
  stateNames: ['level', 'level_rate'],
  discretizeInto(dtS, A, Q) {
    A.set([1, dtS, 0, 1]);
    Q.set([q * dtS ** 3 / 3, q * dtS ** 2 / 2, q * dtS ** 2 / 2, q * dtS]);
  },
};
const z = [1.1, 1.9, 3.2, 3.8, 5.3, 6.0];
const prior = { x: [0, 1], P: [4, 0, 0, 1] };

/** C8 table rows: x1, x2, P11, P12, P22. */
const filteredTable = [
  [0.88, 1.0, 0.8, 0, 1.0],
  [1.893258427, 1.0084269663, 0.6629213483, 0.4213483146, 0.9733146067],
  [3.1181713112, 1.1430075767, 0.7256966739, 0.4511365096, 0.731347117],
  [3.9307943985, 0.9556467425, 0.7163911837, 0.4062649856, 0.649379177],
  [5.1763638448, 1.1170715668, 0.7010433884, 0.3903309549, 0.6397458443],
  [6.0892411491, 1.0028360423, 0.6958746438, 0.3893038125, 0.641407066],
];
const smoothedTable = [
  [0.902824459, 1.0425853873, 0.5249002335, -0.2058239587, 0.3796753384],
  [1.9536786453, 1.0567454375, 0.3156771368, -0.0322710947, 0.270364261],
  [3.0070870179, 1.0432205395, 0.3038585095, 0.0059975369, 0.2201701922],
  [4.0424942696, 1.0368192775, 0.3115516966, 0.0008974442, 0.22324904],
  [5.0789683443, 1.0251463296, 0.3388002979, 0.0484334149, 0.3170511375],
  filteredTable[5]!,
];
/** Fixed lag L = 2: the estimate of x_{k−2} after z_k, for k = 3..6. */
const fixedLagTable = [
  [0.8798767176, 1.0816745858, 0.583022987, -0.2527289072, 0.4329009888],
  [1.9519506377, 1.0275031716, 0.325486673, -0.0407730923, 0.290002944],
  [3.0021785404, 1.0608342343, 0.3047785691, 0.0026959738, 0.2320175978],
  [4.0424942696, 1.0368192775, 0.3115516966, 0.0008974442, 0.22324904],
];

function row(r: readonly number[]): { x: number[]; P: number[] } {
  return { x: [r[0]!, r[1]!], P: [r[2]!, r[3]!, r[3]!, r[4]!] };
}

/** Runs the KF over z (the prior is updated by z_1 directly) and records every step. */
function filterSteps(): SmootherStep[] {
  const sensor = new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [1] });
  const ws = new FilterWorkspace(2, 1);
  const x = Float64Array.from(prior.x);
  const P = Float64Array.from(prior.P);
  const steps: SmootherStep[] = [];
  for (let k = 0; k < z.length; k++) {
    let A = Float64Array.of(1, 0, 0, 1);
    if (k > 0) {
      if (!kalmanPredictInPlace(cwna, T, x, P, ws)) throw new Error(`prediction ${k} failed`);
      A = Float64Array.from(ws.A);
    }
    const xPredicted = Float64Array.from(x);
    const PPredicted = Float64Array.from(P);
    const verdict = kalmanUpdateInPlace(sensor, Float64Array.of(z[k]!), sensor.R, Infinity, x, P, ws);
    if (verdict !== 'applied') throw new Error(`update ${k}: ${verdict}`);
    steps.push({ tS: k * T, xFiltered: Float64Array.from(x), PFiltered: Float64Array.from(P), xPredicted, PPredicted, A });
  }
  return steps;
}

/**
 * Independent batch MAP: weighted least squares over the stacked 12-vector [x_1; …; x_6] by the
 * normal equations, with the prior, the dynamics x_k − A x_{k−1} (weight Q⁻¹) and the
 * measurements. Returns the means and the 2×2 diagonal blocks of (JᵀWJ)⁻¹.
 */
function batchLeastSquares(): { x: number[][]; P: number[][] } {
  const N = z.length;
  const n = 2 * N;
  const rows: number[][] = [];
  const rhs: number[] = [];
  const weights: Matrix[] = [];
  const block = (entries: Array<[number, number[]]>, b: number[], w: Matrix): void => {
    for (let r = 0; r < b.length; r++) {
      const line = new Array<number>(n).fill(0);
      for (const [k, coeffs] of entries) {
        line[2 * k] = coeffs[2 * r]!;
        line[2 * k + 1] = coeffs[2 * r + 1]!;
      }
      rows.push(line);
      rhs.push(b[r]!);
    }
    weights.push(w);
  };
  block([[0, [1, 0, 0, 1]]], prior.x, inverse(new Matrix([[4, 0], [0, 1]])));
  const Qinv = inverse(new Matrix([[q * T ** 3 / 3, q * T ** 2 / 2], [q * T ** 2 / 2, q * T]]));
  for (let k = 1; k < N; k++) block([[k, [1, 0, 0, 1]], [k - 1, [-1, -T, 0, -1]]], [0, 0], Qinv);
  for (let k = 0; k < N; k++) block([[k, [1, 0]]], [z[k]!], new Matrix([[1]]));
  const J = new Matrix(rows);
  const W = Matrix.zeros(rows.length, rows.length);
  let o = 0;
  for (const w of weights) {
    for (let i = 0; i < w.rows; i++) for (let j = 0; j < w.columns; j++) W.set(o + i, o + j, w.get(i, j));
    o += w.rows;
  }
  const JtW = J.transpose().mmul(W);
  const info = JtW.mmul(J);
  const mean = solve(info, JtW.mmul(Matrix.columnVector(rhs))).to1DArray();
  const cov = inverse(info);
  return {
    x: Array.from({ length: N }, (_, k) => [mean[2 * k]!, mean[2 * k + 1]!]),
    P: Array.from({ length: N }, (_, k) => [cov.get(2 * k, 2 * k), cov.get(2 * k, 2 * k + 1), cov.get(2 * k + 1, 2 * k), cov.get(2 * k + 1, 2 * k + 1)]),
  };
}

describe('C8: RTS smoother on tank-a', () => {
  const steps = filterSteps();
  const smoothed = smoothBatch(steps);

  it('filters to the tabulated estimates', () => {
    steps.forEach((s, k) => {
      const e = row(filteredTable[k]!);
      expectClose(s.xFiltered, e.x, 1e-9);
      expectClose(s.PFiltered, e.P, 1e-9);
    });
  });

  it('smooths to the tabulated estimates', () => {
    expect(smoothed).toHaveLength(6);
    smoothed.forEach((s, k) => {
      const e = row(smoothedTable[k]!);
      expect(s.tS).toBe(k * T);
      expect(s.restarted).toBe(false);
      expectClose(s.x, e.x, 1e-9);
      expectClose(s.P, e.P, 1e-9);
    });
  });

  it('equals the batch weighted-least-squares solution of the stacked problem', () => {
    const batch = batchLeastSquares();
    smoothed.forEach((s, k) => {
      expectClose(s.x, batch.x[k]!, 1e-9);
      expectClose(s.P, batch.P[k]!, 1e-9);
    });
  });

  it('never has more uncertainty than the filter: P_f − P_s is PSD at every step', () => {
    smoothed.forEach((s, k) => {
      const d = new Matrix(2, 2);
      for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++) d.set(i, j, steps[k]!.PFiltered[i * 2 + j]! - s.P[i * 2 + j]!);
      const eig = new EigenvalueDecomposition(d, { assumeSymmetric: true }).realEigenvalues;
      // At k = 5 there is an exact zero eigenvalue (C8), so the bound is ≥ −1e-12, not > 0.
      expect(Math.min(...eig)).toBeGreaterThanOrEqual(-1e-12);
    });
  });

  it('leaves the last step at its filtered estimate', () => {
    const last = smoothed[5]!;
    expect([...last.x]).toEqual([...steps[5]!.xFiltered]);
    expect([...last.P]).toEqual([...steps[5]!.PFiltered]);
  });

  it('reproduces the fixed-lag L = 2 table', () => {
    const fls = new FixedLagSmoother(2, 2);
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    steps.forEach((s, k) => {
      expect(fls.push(s.tS, s.xPredicted!, s.PPredicted!, s.A!, s.xFiltered, s.PFiltered)).toBe(true);
      if (k < 2) return;
      expect(fls.smoothedInto(x, P)).toBe((k - 2) * T);
      const e = row(fixedLagTable[k - 2]!);
      expectClose(x, e.x, 1e-9);
      expectClose(P, e.P, 1e-9);
    });
  });
});
