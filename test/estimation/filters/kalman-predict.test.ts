/**
 * The time update against a plain ml-matrix evaluation of A x and A P Aᵀ + Q (an independent
 * implementation of the same formulas), for the generated kernels and the loop kernels, over
 * random sizes and sparsity patterns, including transitions whose pattern changes with dt.
 */
import { describe, expect, it } from 'vitest';
import { Matrix } from 'ml-matrix';
import { FilterWorkspace } from '../../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../../src/estimation/filters/kalman-predict.js';
import type { ProcessModel } from '../../../src/estimation/models/process-model.js';
import { randomCovariance, randomVector, relativeError, seededRandom, sparseMatrix } from './random-matrices.js';

const TOL = 1e-12;

/** A process model whose A(dt) and Q(dt) are whatever `write` puts there. */
function modelOf(n: number, write: (dtS: number, A: Float64Array, Q: Float64Array) => void): ProcessModel {
  return { dim: n, stateNames: Array.from({ length: n }, (_, i) => `s${i}`), discretizeInto: write };
}

function plainPredict(A: Float64Array, Q: Float64Array, x: Float64Array, P: Float64Array, n: number): { x: number[]; P: number[] } {
  const a = Matrix.from1DArray(n, n, Array.from(A));
  const xm = Matrix.columnVector(Array.from(x));
  const pm = Matrix.from1DArray(n, n, Array.from(P));
  return {
    x: a.mmul(xm).to1DArray(),
    P: a.mmul(pm).mmul(a.transpose()).add(Matrix.from1DArray(n, n, Array.from(Q))).to1DArray(),
  };
}

function expectSymmetric(P: Float64Array, n: number): void {
  for (let i = 0; i < n; i++) for (let j = 0; j < i; j++) expect(P[i * n + j]).toBe(P[j * n + i]);
}

describe('kalmanPredictInPlace', () => {
  for (const generatedKernels of [true, false]) {
    it(`matches A x and A P Aᵀ + Q over random sizes and patterns (${generatedKernels ? 'generated' : 'loop'} kernels)`, () => {
      const rand = seededRandom(7);
      for (let trial = 0; trial < 60; trial++) {
        const n = 1 + Math.floor(rand() * 9);
        const A = sparseMatrix(rand, n, n, 0.15 + 0.7 * rand());
        const Q = randomCovariance(rand, n, 0.1);
        const model = modelOf(n, (_dt, a, q) => { a.set(A); q.set(Q); });
        const ws = new FilterWorkspace(n, 1, { generatedKernels });
        const x = randomVector(rand, n);
        const P = randomCovariance(rand, n, 0.5);
        const expected = plainPredict(A, Q, x, P, n);
        expect(kalmanPredictInPlace(model, 1, x, P, ws)).toBe(true);
        expect(relativeError(x, expected.x)).toBeLessThan(TOL);
        expect(relativeError(P, expected.P)).toBeLessThan(TOL);
        expectSymmetric(P, n);
      }
    });
  }

  it('gives the loop kernels’ bits exactly from the generated kernels', () => {
    const rand = seededRandom(11);
    for (let trial = 0; trial < 40; trial++) {
      const n = 1 + Math.floor(rand() * 8);
      const A = sparseMatrix(rand, n, n, 0.2 + 0.6 * rand());
      const Q = randomCovariance(rand, n, 0.1);
      const model = modelOf(n, (_dt, a, q) => { a.set(A); q.set(Q); });
      const x0 = randomVector(rand, n);
      const P0 = randomCovariance(rand, n, 0.5);
      const [xg, Pg, xl, Pl] = [Float64Array.from(x0), Float64Array.from(P0), Float64Array.from(x0), Float64Array.from(P0)];
      kalmanPredictInPlace(model, 2, xg, Pg, new FilterWorkspace(n, 1));
      kalmanPredictInPlace(model, 2, xl, Pl, new FilterWorkspace(n, 1, { generatedKernels: false }));
      expect(Array.from(xg)).toEqual(Array.from(xl));
      expect(Array.from(Pg)).toEqual(Array.from(Pl));
    }
  });

  it('follows a transition whose nonzero pattern changes with dt, growing and shrinking', () => {
    // Each dt switches a different set of entries on: the kernel must widen its mask when a new
    // nonzero appears and stay correct when entries fall back to zero.
    const n = 5;
    const rand = seededRandom(3);
    const patterns = Array.from({ length: 6 }, () => sparseMatrix(rand, n, n, 0.35));
    const Q = randomCovariance(rand, n, 0.2);
    const model = modelOf(n, (dt, a, q) => { a.set(patterns[Math.round(dt) % patterns.length]!); q.set(Q); });
    for (const generatedKernels of [true, false]) {
      const ws = new FilterWorkspace(n, 1, { generatedKernels });
      const x = randomVector(seededRandom(5), n);
      const P = randomCovariance(seededRandom(6), n, 1);
      for (const dt of [1, 2, 1, 3, 4, 1, 5, 6, 2, 5]) {
        // Keep the numbers O(1) so the relative tolerance stays meaningful over many steps.
        let scale = 0;
        for (const v of P) scale = Math.max(scale, Math.abs(v));
        for (let k = 0; k < P.length; k++) P[k] = P[k]! / scale;
        const expected = plainPredict(patterns[dt % patterns.length]!, Q, x, P, n);
        expect(kalmanPredictInPlace(model, dt, x, P, ws)).toBe(true);
        expect(relativeError(x, expected.x)).toBeLessThan(TOL);
        expect(relativeError(P, expected.P)).toBeLessThan(TOL);
      }
    }
  });

  it('starts a fresh pattern when another model runs in the same workspace', () => {
    const n = 3;
    const dense = modelOf(n, (_dt, a, q) => { a.fill(0.5); q.fill(0); });
    const diagonal = modelOf(n, (_dt, a, q) => { a.fill(0); a[0] = 2; a[4] = 3; a[8] = 4; q.fill(0); });
    const ws = new FilterWorkspace(n, 1);
    const x = Float64Array.of(1, 1, 1);
    const P = Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1);
    kalmanPredictInPlace(dense, 1, x, P, ws);
    expect(Array.from(x)).toEqual([1.5, 1.5, 1.5]);
    kalmanPredictInPlace(diagonal, 1, x, P, ws);
    expect(Array.from(x)).toEqual([3, 4.5, 6]);
    expect(Array.from(ws.aMask)).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
  });

  it('refuses a non-finite transition or result and leaves x and P untouched', () => {
    const n = 2;
    for (const generatedKernels of [true, false]) {
      const broken = modelOf(n, (_dt, a, q) => { a.set([1, Number.NaN, 0, 1]); q.fill(0); });
      const huge = modelOf(n, (_dt, a, q) => { a.set([1e200, 0, 0, 1]); q.fill(0); });
      for (const model of [broken, huge]) {
        const ws = new FilterWorkspace(n, 1, { generatedKernels });
        const x = Float64Array.of(1, 2);
        const P = Float64Array.of(1e200, 0, 0, 1);
        expect(kalmanPredictInPlace(model, 1, x, P, ws)).toBe(false);
        expect(Array.from(x)).toEqual([1, 2]);
        expect(Array.from(P)).toEqual([1e200, 0, 0, 1]);
      }
    }
  });

  it('applies a known input after the generated time update', () => {
    const n = 2;
    const model: ProcessModel = {
      ...modelOf(n, (dt, a, q) => { a.set([1, dt, 0, 1]); q.set([0, 0, 0, 1]); }),
      inputDim: 1,
      applyInputInPlace: (dt, u, x) => { x[1] = x[1]! + dt * u[0]!; },
    };
    for (const generatedKernels of [true, false]) {
      const x = Float64Array.of(1, 2);
      const P = Float64Array.of(1, 0, 0, 1);
      expect(kalmanPredictInPlace(model, 2, x, P, new FilterWorkspace(n, 1, { generatedKernels }), Float64Array.of(3))).toBe(true);
      // x = A x + [0, dt·u] = [1 + 2·2, 2 + 6]; P = A I Aᵀ + Q = [[5, 2], [2, 2]].
      expect(Array.from(x)).toEqual([5, 8]);
      expect(Array.from(P)).toEqual([5, 2, 2, 2]);
    }
  });

  it('falls back to the loop kernels past the size limit and stays correct', () => {
    const n = 24;
    const rand = seededRandom(9);
    const A = sparseMatrix(rand, n, n, 0.9);
    const Q = randomCovariance(rand, n, 0.1);
    const ws = new FilterWorkspace(n, 1);
    const x = randomVector(rand, n);
    const P = randomCovariance(rand, n, 0.5);
    const expected = plainPredict(A, Q, x, P, n);
    expect(kalmanPredictInPlace(modelOf(n, (_dt, a, q) => { a.set(A); q.set(Q); }), 1, x, P, ws)).toBe(true);
    expect(ws.predictKernel).toBeNull();
    expect(relativeError(P, expected.P)).toBeLessThan(TOL);
  });
});
