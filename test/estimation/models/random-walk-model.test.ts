import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { RandomWalkModel } from '../../../src/estimation/models/random-walk-model.js';
import { agrees, stepOf, vanLoanDiagonal } from './van-loan-reference.js';
import { expectCloseToMatrix } from './close-to-matrix.js';

describe('RandomWalkModel', () => {
  it('has one state named x by default', () => {
    const m = new RandomWalkModel({ spectralDensity: 1 });
    expect(m.stateNames).toEqual(['x']);
    expect(m.dim).toBe(1);
  });

  it('gives A = I and Q = diag(q·dt) per state', () => {
    const m = new RandomWalkModel({ stateNames: ['inflow', 'outflow'], spectralDensity: [0.2, 0.5] });
    const { A, Q } = stepOf(m, 3);
    expectCloseToMatrix(A, [1, 0, 0, 1], 0);
    expectCloseToMatrix(Q, [0.6, 0, 0, 1.5], 1e-15);
  });

  it('agrees with Van Loan to 1e-12 for random q and dt', () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-3, max: 10, noNaN: true }), fc.double({ min: 0, max: 100, noNaN: true }), (q, dtS) =>
        agrees(stepOf(new RandomWalkModel({ spectralDensity: q }), dtS), vanLoanDiagonal([0], [q], dtS), 1e-12),
      ),
      { numRuns: 100 },
    );
  });

  it('gives Q = 0 for dt = 0', () => {
    expect(Array.from(stepOf(new RandomWalkModel({ spectralDensity: 4 }), 0).Q)).toEqual([0]);
  });

  it('rejects a spectral-density list of the wrong length', () => {
    expect(() => new RandomWalkModel({ stateNames: ['a', 'b'], spectralDensity: [1] })).toThrow(
      'spectralDensity must be a number or an array of 2 (one per axis), got 1 entries',
    );
  });
});
