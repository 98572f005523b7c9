import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { ConstantVelocityModel } from '../../../src/estimation/models/constant-velocity-model.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';
import { agrees, stepOf, vanLoanChain } from './van-loan-reference.js';
import { expectCloseToMatrix } from './close-to-matrix.js';

const density = fc.double({ min: 1e-3, max: 10, noNaN: true });
const dt = fc.double({ min: 1e-4, max: 20, noNaN: true });

describe('ConstantVelocityModel', () => {
  it('names positions first, then velocities, by default east/north', () => {
    const m = new ConstantVelocityModel({ spectralDensity: 1 });
    expect(m.stateNames).toEqual(['east', 'north', 'v_east', 'v_north']);
    expect(m.dim).toBe(4);
  });

  it('takes configured names for a one-axis level block', () => {
    const m = new ConstantVelocityModel({ positionNames: ['level'], velocityNames: ['level_rate'], spectralDensity: 1e-4 });
    expect(m.stateNames).toEqual(['level', 'level_rate']);
  });

  it('gives q[[T³/3, T²/2], [T²/2, T]] per axis for q = 2, T = 0.5', () => {
    // Bar-Shalom, Li, Kirubarajan 2001 §6.2 (from memory); C7 "CV (CWNA)" values.
    const { A, Q } = stepOf(new ConstantVelocityModel({ positionNames: ['level'], spectralDensity: 2 }), 0.5);
    expectCloseToMatrix(A, [1, 0.5, 0, 1], 1e-15);
    expectCloseToMatrix(Q, [1 / 12, 0.25, 0.25, 1], 1e-15);
  });

  it('places each axis on its own position/velocity pair with its own q', () => {
    // Axis east (q = 1) uses indices 0 and 2; axis north (q = 3) uses 1 and 3; T = 1.
    const { A, Q } = stepOf(new ConstantVelocityModel({ spectralDensity: [1, 3] }), 1);
    expectCloseToMatrix(A, [1, 0, 1, 0, 0, 1, 0, 1, 0, 0, 1, 0, 0, 0, 0, 1], 1e-15);
    expectCloseToMatrix(Q, [1 / 3, 0, 1 / 2, 0, 0, 1, 0, 3 / 2, 1 / 2, 0, 1, 0, 0, 3 / 2, 0, 3], 1e-15);
  });

  it('agrees with Van Loan to 1e-12 for random q and dt (two axes)', () => {
    fc.assert(
      fc.property(density, density, dt, (q1, q2, dtS) => {
        const m = new ConstantVelocityModel({ spectralDensity: [q1, q2] });
        return agrees(stepOf(m, dtS), vanLoanChain(2, [q1, q2], dtS), 1e-12);
      }),
      { numRuns: 200 },
    );
  });

  it('gives A = I and Q = 0 for dt = 0', () => {
    const { A, Q } = stepOf(new ConstantVelocityModel({ spectralDensity: 1 }), 0);
    expectCloseToMatrix(A, [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1], 0);
    expect(Array.from(Q).every((v) => v === 0)).toBe(true);
  });

  it('writes NaN for a negative dt', () => {
    const { A, Q } = stepOf(new ConstantVelocityModel({ spectralDensity: 1 }), -1);
    expect([...A, ...Q].every(Number.isNaN)).toBe(true);
  });

  it('rejects a non-positive spectral density', () => {
    expect(() => new ConstantVelocityModel({ spectralDensity: 0 })).toThrow(
      'spectralDensity must be a positive finite number, got 0',
    );
  });

  it('rejects a velocity name list of the wrong length', () => {
    expect(() => new ConstantVelocityModel({ velocityNames: ['v_east'], spectralDensity: 1 })).toThrow(
      'velocityNames must have 2 entries, got 1',
    );
  });

  it('rejects a velocity name that repeats a position name', () => {
    const make = (): ConstantVelocityModel =>
      new ConstantVelocityModel({ positionNames: ['level'], velocityNames: ['level'], spectralDensity: 1 });
    expect(make).toThrow(ModelConfigError);
    expect(make).toThrow("stateNames has the duplicate state name 'level'");
  });
});
