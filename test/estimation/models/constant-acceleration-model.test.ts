import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { ConstantAccelerationModel } from '../../../src/estimation/models/constant-acceleration-model.js';
import { agrees, stepOf, vanLoanChain } from './van-loan-reference.js';
import { expectCloseToMatrix } from './close-to-matrix.js';

const density = fc.double({ min: 1e-3, max: 10, noNaN: true });
const dt = fc.double({ min: 1e-4, max: 10, noNaN: true });

describe('ConstantAccelerationModel', () => {
  it('names positions, velocities, then accelerations', () => {
    const m = new ConstantAccelerationModel({ spectralDensity: 1 });
    expect(m.stateNames).toEqual(['east', 'north', 'v_east', 'v_north', 'a_east', 'a_north']);
  });

  it('gives the white-jerk Q for q = 2, T = 0.5', () => {
    // Bar-Shalom, Li, Kirubarajan 2001 §6.2 (from memory); C7 "CA (white jerk)" values.
    const { A, Q } = stepOf(new ConstantAccelerationModel({ positionNames: ['x'], spectralDensity: 2 }), 0.5);
    expectCloseToMatrix(A, [1, 0.5, 0.125, 0, 1, 0.5, 0, 0, 1], 1e-15);
    expectCloseToMatrix(Q, [0.003125, 0.015625, 1 / 24, 0.015625, 1 / 12, 0.25, 1 / 24, 0.25, 1], 1e-15);
  });

  it('agrees with Van Loan to 1e-12 for random q and dt (two axes)', () => {
    fc.assert(
      fc.property(density, density, dt, (q1, q2, dtS) => {
        const m = new ConstantAccelerationModel({ spectralDensity: [q1, q2] });
        return agrees(stepOf(m, dtS), vanLoanChain(3, [q1, q2], dtS), 1e-12);
      }),
      { numRuns: 200 },
    );
  });

  it('gives A = I and Q = 0 for dt = 0', () => {
    const { A, Q } = stepOf(new ConstantAccelerationModel({ positionNames: ['x'], spectralDensity: 1 }), 0);
    expect(Array.from(A)).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(Array.from(Q).every((v) => v === 0)).toBe(true);
  });

  it('rejects an acceleration name list of the wrong length', () => {
    expect(() => new ConstantAccelerationModel({ accelerationNames: ['a'], spectralDensity: 1 })).toThrow(
      'accelerationNames must have 2 entries, got 1',
    );
  });

  it('rejects a non-finite spectral density for one axis', () => {
    expect(() => new ConstantAccelerationModel({ spectralDensity: [1, NaN] })).toThrow(
      'spectralDensity[1] must be a positive finite number, got NaN',
    );
  });
});
