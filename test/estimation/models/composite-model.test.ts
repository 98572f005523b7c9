import { describe, it, expect } from 'vitest';
import { CompositeModel } from '../../../src/estimation/models/composite-model.js';
import { ConstantVelocityModel } from '../../../src/estimation/models/constant-velocity-model.js';
import { GaussMarkovModel } from '../../../src/estimation/models/gauss-markov-model.js';
import { RandomWalkModel } from '../../../src/estimation/models/random-walk-model.js';
import { DiscreteModel } from '../../../src/estimation/models/discrete-model.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';
import { stepOf } from './van-loan-reference.js';
import { expectCloseToMatrix } from './close-to-matrix.js';

/** tank-a: water level and its rate, plus a slowly wandering pressure-sensor bias. */
const level = (): ConstantVelocityModel =>
  new ConstantVelocityModel({ positionNames: ['level'], velocityNames: ['level_rate'], spectralDensity: 1e-4 });
const bias = (): GaussMarkovModel => new GaussMarkovModel({ stateNames: ['pressure_bias'], tauS: 600, sigma: 0.02 });

describe('CompositeModel', () => {
  it('concatenates state names in block order', () => {
    const m = new CompositeModel([level(), bias()]);
    expect(m.stateNames).toEqual(['level', 'level_rate', 'pressure_bias']);
    expect(m.dim).toBe(3);
  });

  it('places each block on the diagonal with zeros elsewhere', () => {
    const dtS = 2.5;
    const cv = stepOf(level(), dtS);
    const gm = stepOf(bias(), dtS);
    const { A, Q } = stepOf(new CompositeModel([level(), bias()]), dtS);
    const blkdiag = (a: Float64Array, b: Float64Array): number[] => [a[0]!, a[1]!, 0, a[2]!, a[3]!, 0, 0, 0, b[0]!];
    expectCloseToMatrix(A, blkdiag(cv.A, gm.A), 0);
    expectCloseToMatrix(Q, blkdiag(cv.Q, gm.Q), 0);
  });

  it('overwrites stale entries in the caller’s buffers', () => {
    const m = new CompositeModel([level(), bias()]);
    const A = new Float64Array(9).fill(5);
    const Q = new Float64Array(9).fill(5);
    m.discretizeInto(1, A, Q);
    expect(A[2]).toBe(0);
    expect(Q[6]).toBe(0);
  });

  it('gives A = I and Q = 0 for dt = 0', () => {
    const { A, Q } = stepOf(new CompositeModel([level(), bias()]), 0);
    expect(Array.from(A)).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(Array.from(Q).every((v) => v === 0)).toBe(true);
  });

  it('rejects a state name used by two blocks', () => {
    const other = new RandomWalkModel({ stateNames: ['level'], spectralDensity: 1 });
    const make = (): CompositeModel => new CompositeModel([level(), bias(), other]);
    expect(make).toThrow(ModelConfigError);
    expect(make).toThrow("state name 'level' appears in block 0 and block 2");
  });

  it('rejects an empty block list', () => {
    expect(() => new CompositeModel([])).toThrow('blocks must be a non-empty array of process models');
  });

  it('has no input when no block has one', () => {
    const m = new CompositeModel([level(), bias()]);
    expect(m.inputDim).toBeUndefined();
    expect(m.applyInputInPlace).toBeUndefined();
  });

  it('routes each block’s slice of the input to its slice of the state', () => {
    // tank-b volume with a pump input (one step 1 s: x += 0.5·u), after tank-a's level block.
    const pump = new DiscreteModel({ A: [[1]], Q: [[0.01]], G: [[0.5]], stepS: 1, stateNames: ['volume'] });
    const m = new CompositeModel([level(), pump]);
    expect(m.inputDim).toBe(1);
    const x = Float64Array.from([1, 2, 3]);
    m.applyInputInPlace!(2, Float64Array.from([4]), x);
    // Two steps of A = 1, G = 0.5: volume gains 2·0.5·4 = 4; the level block is untouched.
    expectCloseToMatrix(x, [1, 2, 7], 1e-15);
  });
});
