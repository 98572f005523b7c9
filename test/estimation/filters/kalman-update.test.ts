/**
 * The measurement update against a plain ml-matrix evaluation of the textbook formulas
 * (S = H P Hᵀ + R, K = P Hᵀ S⁻¹, x + Kν, Joseph form (I − KH) P (I − KH)ᵀ + K R Kᵀ), for the
 * generated kernels and the loop kernels, over random sizes and sparsity patterns of H, with
 * sensors whose Jacobian pattern changes from one step to the next.
 */
import { describe, expect, it } from 'vitest';
import { Matrix, inverse } from 'ml-matrix';
import { FilterWorkspace } from '../../../src/estimation/filters/filter-workspace.js';
import { kalmanUpdateInPlace } from '../../../src/estimation/filters/kalman-update.js';
import type { MeasurementModel } from '../../../src/estimation/measurements/measurement-model.js';
import { LinearMeasurement } from '../../../src/estimation/measurements/linear-measurement.js';
import { ConstantVelocityModel } from '../../../src/estimation/models/constant-velocity-model.js';
import { kalmanPredictInPlace } from '../../../src/estimation/filters/kalman-predict.js';
import { randomCovariance, randomVector, relativeError, seededRandom, sparseMatrix } from './random-matrices.js';

const TOL = 1e-10;

/** A sensor y = H x whose H is whatever `jacobian` returns (linear: constant, else per call). */
function sensorOf(n: number, m: number, linear: boolean, jacobian: () => Float64Array): MeasurementModel {
  return {
    dim: m,
    stateDim: n,
    linear,
    componentNames: Array.from({ length: m }, (_, r) => `c${r}`),
    R: new Float64Array(m * m),
    normalizeInPlace() {},
    measureInto(x, yhat) {
      const H = jacobian();
      for (let r = 0; r < m; r++) {
        let s = 0;
        for (let k = 0; k < n; k++) s += H[r * n + k]! * x[k]!;
        yhat[r] = s;
      }
    },
    jacobianInto(_x, H) { H.set(jacobian()); },
    innovationInto(y, yhat, nu) { for (let r = 0; r < m; r++) nu[r] = y[r]! - yhat[r]!; },
    initializeInPlace() { return false; },
  };
}

interface Plain { x: number[]; P: number[]; K: number[]; S: number[]; nis: number }

function plainUpdate(H: Float64Array, R: Float64Array, y: Float64Array, x: Float64Array, P: Float64Array, n: number, m: number): Plain {
  const h = Matrix.from1DArray(m, n, Array.from(H));
  const r = Matrix.from1DArray(m, m, Array.from(R));
  const p = Matrix.from1DArray(n, n, Array.from(P));
  const xm = Matrix.columnVector(Array.from(x));
  const nu = Matrix.columnVector(Array.from(y)).sub(h.mmul(xm));
  const S = h.mmul(p).mmul(h.transpose()).add(r);
  const K = p.mmul(h.transpose()).mmul(inverse(S));
  const IKH = Matrix.eye(n).sub(K.mmul(h));
  return {
    x: xm.add(K.mmul(nu)).to1DArray(),
    P: IKH.mmul(p).mmul(IKH.transpose()).add(K.mmul(r).mmul(K.transpose())).to1DArray(),
    K: K.to1DArray(),
    S: S.to1DArray(),
    nis: nu.transpose().mmul(inverse(S)).mmul(nu).get(0, 0),
  };
}

function expectMatches(ws: FilterWorkspace, x: Float64Array, P: Float64Array, plain: Plain, n: number, m: number): void {
  expect(relativeError(x, plain.x)).toBeLessThan(TOL);
  expect(relativeError(P, plain.P)).toBeLessThan(TOL);
  expect(relativeError(ws.K.subarray(0, n * m), plain.K)).toBeLessThan(TOL);
  expect(relativeError(ws.S.subarray(0, m * m), plain.S)).toBeLessThan(TOL);
  expect(Math.abs(ws.nis - plain.nis)).toBeLessThan(TOL * Math.max(1, plain.nis));
  // ws.L is S's lower Cholesky factor, upper part zeroed: L Lᵀ reproduces S.
  const L = Matrix.from1DArray(m, m, Array.from(ws.L.subarray(0, m * m)));
  for (let i = 0; i < m; i++) for (let j = i + 1; j < m; j++) expect(L.get(i, j)).toBe(0);
  expect(relativeError(L.mmul(L.transpose()).to1DArray(), plain.S)).toBeLessThan(TOL);
  for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) expect(P[i * n + j]).toBe(P[j * n + i]);
}

describe('kalmanUpdateInPlace', () => {
  for (const generatedKernels of [true, false]) {
    const kind = generatedKernels ? 'generated' : 'loop';
    it(`matches the textbook update over random sizes and patterns of H (${kind} kernels)`, () => {
      const rand = seededRandom(21);
      for (let trial = 0; trial < 60; trial++) {
        const n = 1 + Math.floor(rand() * 8);
        // m may exceed n (several components reading the same states): S stays PD through R.
        const m = 1 + Math.floor(rand() * 4);
        const H = sparseMatrix(rand, m, n, 0.2 + 0.7 * rand());
        const R = randomCovariance(rand, m, 0.5);
        const ws = new FilterWorkspace(n, m, { generatedKernels });
        const x = randomVector(rand, n);
        const P = randomCovariance(rand, n, 0.5);
        const y = randomVector(rand, m);
        const plain = plainUpdate(H, R, y, x, P, n, m);
        expect(kalmanUpdateInPlace(sensorOf(n, m, true, () => H), y, R, Infinity, x, P, ws)).toBe('applied');
        expectMatches(ws, x, P, plain, n, m);
      }
    });

    it(`follows a Jacobian whose pattern changes from step to step (${kind} kernels)`, () => {
      const n = 6;
      const m = 2;
      const rand = seededRandom(4);
      const Hs = Array.from({ length: 5 }, () => sparseMatrix(rand, m, n, 0.4));
      // A row of zeros must work too (that component then carries no information).
      Hs[2]!.fill(0, 0, n);
      let step = 0;
      const sensor = sensorOf(n, m, false, () => Hs[step % Hs.length]!);
      const ws = new FilterWorkspace(n, m, { generatedKernels });
      const x = randomVector(rand, n);
      const P = randomCovariance(rand, n, 2);
      const R = randomCovariance(rand, m, 1);
      for (step = 0; step < 12; step++) {
        // Keep P away from collapse so the comparison stays well conditioned over the steps.
        for (let i = 0; i < n; i++) P[i * n + i] = P[i * n + i]! + 1;
        const y = randomVector(rand, m);
        const plain = plainUpdate(Hs[step % Hs.length]!, R, y, x, P, n, m);
        expect(kalmanUpdateInPlace(sensor, y, R, Infinity, x, P, ws)).toBe('applied');
        expectMatches(ws, x, P, plain, n, m);
      }
    });

    it(`averages the two triangles of an asymmetric R (${kind} kernels)`, () => {
      const H = Float64Array.of(1, 0, 0, 0, 1, 0);
      const R = Float64Array.of(2, 0.3, 0.1, 1);
      const sym = Float64Array.of(2, 0.2, 0.2, 1);
      const x = Float64Array.of(0, 0, 0);
      const P = randomCovariance(seededRandom(8), 3, 1);
      const y = Float64Array.of(1, -1);
      const plain = plainUpdate(H, sym, y, x, P, 3, 2);
      const ws = new FilterWorkspace(3, 2, { generatedKernels });
      expect(kalmanUpdateInPlace(sensorOf(3, 2, true, () => H), y, R, Infinity, x, P, ws)).toBe('applied');
      expectMatches(ws, x, P, plain, 3, 2);
    });

    it(`refuses at the gate and commits nothing (${kind} kernels)`, () => {
      const H = Float64Array.of(1, 0);
      const x = Float64Array.of(0, 0);
      const P = Float64Array.of(1, 0, 0, 1);
      const ws = new FilterWorkspace(2, 1, { generatedKernels });
      // ν = 10, S = 2: d² = 50, above a gate of 9.
      expect(kalmanUpdateInPlace(sensorOf(2, 1, true, () => H), Float64Array.of(10), Float64Array.of(1), 9, x, P, ws)).toBe('gate');
      expect(ws.nis).toBeCloseTo(50, 12);
      expect(ws.sDiagonal[0]).toBe(2);
      expect(Array.from(x)).toEqual([0, 0]);
      expect(Array.from(P)).toEqual([1, 0, 0, 1]);
    });

    it(`refuses a result that is not PSD and commits nothing (${kind} kernels)`, () => {
      // An indefinite prior with a positive S: the Joseph form keeps the −1 of the unobserved state.
      const H = Float64Array.of(1, 0);
      const x = Float64Array.of(0, 0);
      const P = Float64Array.of(1, 0, 0, -1);
      const ws = new FilterWorkspace(2, 1, { generatedKernels });
      expect(kalmanUpdateInPlace(sensorOf(2, 1, true, () => H), Float64Array.of(1), Float64Array.of(1), Infinity, x, P, ws)).toBe('numerics');
      expect(Array.from(x)).toEqual([0, 0]);
      expect(Array.from(P)).toEqual([1, 0, 0, -1]);
    });

    it(`refuses an S that is not positive definite, with no NIS (${kind} kernels)`, () => {
      const H = Float64Array.of(1, 0);
      const ws = new FilterWorkspace(2, 1, { generatedKernels });
      const P = Float64Array.of(0, 0, 0, 1);
      expect(kalmanUpdateInPlace(sensorOf(2, 1, true, () => H), Float64Array.of(1), Float64Array.of(0), Infinity, Float64Array.of(0, 0), P, ws)).toBe('numerics');
      expect(ws.nis).toBeNaN();
    });
  }

  it('sends a non-finite Jacobian to the loop kernels, which refuse it, without widening the mask', () => {
    let H = Float64Array.of(1, 0, 0);
    const sensor = sensorOf(3, 1, false, () => H);
    const ws = new FilterWorkspace(3, 1);
    const P = Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
    expect(kalmanUpdateInPlace(sensor, Float64Array.of(1), Float64Array.of(1), Infinity, new Float64Array(3), P, ws)).toBe('applied');
    H = Float64Array.of(1, 0, Number.NaN);
    expect(kalmanUpdateInPlace(sensor, Float64Array.of(1), Float64Array.of(1), Infinity, new Float64Array(3), P, ws)).toBe('numerics');
    expect(Array.from(ws.hMasks[1]!)).toEqual([1, 0, 0]);
  });

  it('falls back to the loop kernels past the size limit and stays correct', () => {
    const n = 20;
    const m = 6;
    const rand = seededRandom(13);
    const H = sparseMatrix(rand, m, n, 0.9);
    const R = randomCovariance(rand, m, 1);
    const ws = new FilterWorkspace(n, m);
    const x = randomVector(rand, n);
    const P = randomCovariance(rand, n, 1);
    const y = randomVector(rand, m);
    const plain = plainUpdate(H, R, y, x, P, n, m);
    expect(kalmanUpdateInPlace(sensorOf(n, m, true, () => H), y, R, Infinity, x, P, ws)).toBe('applied');
    expect(ws.updateKernels[m]).toBeNull();
    expectMatches(ws, x, P, plain, n, m);
  });

  it('runs a yard tractor filter over irregular gaps to the loop kernels\' results, gate refusals included', () => {
    const model = new ConstantVelocityModel({ spectralDensity: 0.2 });
    const fix = new LinearMeasurement({ C: [1, 0, 0, 0, 0, 1, 0, 0], dim: 2, stateDim: 4, Rv: [4, 0.5, 0.5, 4] });
    const run = (generatedKernels: boolean): { verdicts: string[]; x: Float64Array; P: Float64Array } => {
      const rand = seededRandom(99);
      const ws = new FilterWorkspace(4, 2, { generatedKernels });
      const x = new Float64Array(4);
      const P = Float64Array.of(100, 0, 0, 0, 0, 100, 0, 0, 0, 0, 10, 0, 0, 0, 0, 10);
      const verdicts: string[] = [];
      let t = 0;
      for (let k = 0; k < 300; k++) {
        const dt = [0.5, 1, 1, 2.5, 0][Math.floor(rand() * 5)]!;
        t += dt;
        // Every 17th fix is an outlier the gate must refuse.
        const outlier = k % 17 === 16 ? 80 : 0;
        const y = Float64Array.of(3 * t + 2 * (rand() - 0.5) + outlier, -t + 2 * (rand() - 0.5));
        expect(kalmanPredictInPlace(model, dt, x, P, ws)).toBe(true);
        verdicts.push(kalmanUpdateInPlace(fix, y, fix.R, 13.8, x, P, ws));
      }
      return { verdicts, x, P };
    };
    const generated = run(true);
    const loops = run(false);
    expect(generated.verdicts).toEqual(loops.verdicts);
    expect(generated.verdicts.filter((v) => v === 'gate').length).toBeGreaterThan(10);
    expect(relativeError(generated.x, loops.x)).toBeLessThan(1e-9);
    expect(relativeError(generated.P, loops.P)).toBeLessThan(1e-9);
  });
});

