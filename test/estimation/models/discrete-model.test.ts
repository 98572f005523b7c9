import { describe, it, expect } from 'vitest';
import { DiscreteModel } from '../../../src/estimation/models/discrete-model.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';
import { matMulInto, matMulTransBInto, matVecInto } from '../../../src/estimation/linalg/multiply.js';
import { stepOf } from './van-loan-reference.js';
import { expectCloseToMatrix, maxAbs } from './close-to-matrix.js';

/** tank-c: level (m), level_rate (m/s) and a pump-flow state, sampled every 0.5 s, pump command u. */
const tankOptions = {
  A: [[1, 0.5, 0.1], [0, 0.95, 0.2], [0, 0, 0.8]],
  B: [[0], [0.1], [1]],
  Q: [[0.04]],
  G: [[0], [0], [0.3]],
  stepS: 0.5,
  stateNames: ['level', 'level_rate', 'pump_flow'],
};
const tank = (): DiscreteModel => new DiscreteModel(tankOptions);
const flatA = Float64Array.from(tankOptions.A.flat());
const flatG = Float64Array.from(tankOptions.G.flat());

/** k steps by plain iteration, P ← A P Aᵀ + B Q Bᵀ (independent of the model's doubling). */
function iterate(k: number): { A: Float64Array; Q: Float64Array } {
  const bqb = Float64Array.from([0, 0, 0, 0, 0.0004, 0.004, 0, 0.004, 0.04]);
  let Ak = Float64Array.from([1, 0, 0, 0, 1, 0, 0, 0, 1]);
  let Qk = new Float64Array(9);
  for (let i = 0; i < k; i++) {
    const nextA = new Float64Array(9);
    matMulInto(flatA, Ak, 3, 3, 3, nextA);
    const aq = new Float64Array(9);
    matMulInto(flatA, Qk, 3, 3, 3, aq);
    const nextQ = new Float64Array(9);
    matMulTransBInto(aq, flatA, 3, 3, 3, nextQ);
    for (let j = 0; j < 9; j++) nextQ[j]! += bqb[j]!;
    Ak = nextA;
    Qk = nextQ;
  }
  return { A: Ak, Q: Qk };
}

describe('DiscreteModel', () => {
  it('gives A and B Q Bᵀ for one step', () => {
    const { A, Q } = stepOf(tank(), 0.5);
    expectCloseToMatrix(A, flatA, 0);
    expectCloseToMatrix(Q, [0, 0, 0, 0, 0.0004, 0.004, 0, 0.004, 0.04], 1e-18);
  });

  it.each([2, 3, 7, 16, 1000])('matches %i iterated steps', (k) => {
    const got = stepOf(tank(), k * 0.5);
    const want = iterate(k);
    expectCloseToMatrix(got.A, want.A, 1e-13 * Math.max(1, maxAbs(want.A)));
    expectCloseToMatrix(got.Q, want.Q, 1e-13 * Math.max(1, maxAbs(want.Q)));
  });

  it('rounds a dt off the sample grid to the nearest number of steps', () => {
    const m = tank();
    expect(m.stepsFor(1.2)).toBe(2);
    expect(m.stepsFor(1.3)).toBe(3);
    expectCloseToMatrix(stepOf(m, 1.3).Q, iterate(3).Q, 1e-15);
  });

  it('leaves the state unchanged for a dt under half a step', () => {
    const { A, Q } = stepOf(tank(), 0.2);
    expect(Array.from(A)).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(Array.from(Q).every((v) => v === 0)).toBe(true);
  });

  it('gives A = I and Q = 0 for dt = 0', () => {
    const { A, Q } = stepOf(tank(), 0);
    expect(Array.from(A)).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    expect(Array.from(Q).every((v) => v === 0)).toBe(true);
  });

  it('returns identical results on a repeated dt', () => {
    const m = tank();
    const first = stepOf(m, 3);
    const second = stepOf(m, 3);
    expect(Array.from(second.Q)).toEqual(Array.from(first.Q));
  });

  it('adds the accumulated input Σ Aⁱ G u after the transition, as stepping would', () => {
    const m = tank();
    const u = Float64Array.from([2]);
    let sim = Float64Array.from([1, 0.1, 0.5]);
    for (let i = 0; i < 5; i++) {
      const next = new Float64Array(3);
      matVecInto(flatA, sim, 3, 3, next);
      for (let j = 0; j < 3; j++) next[j]! += flatG[j]! * u[0]!;
      sim = next;
    }
    const { A } = stepOf(m, 2.5);
    const x = new Float64Array(3);
    matVecInto(A, Float64Array.from([1, 0.1, 0.5]), 3, 3, x);
    m.applyInputInPlace!(2.5, u, x);
    expect(m.inputDim).toBe(1);
    expectCloseToMatrix(x, sim, 1e-14);
  });

  it('has no input without G', () => {
    const m = new DiscreteModel({ A: [[1]], Q: [[1]], stepS: 1 });
    expect(m.inputDim).toBeUndefined();
    expect(m.applyInputInPlace).toBeUndefined();
    expect(m.stateNames).toEqual(['x0']);
  });
});

describe('DiscreteModel validation', () => {
  const bad = (patch: Record<string, unknown>): (() => DiscreteModel) =>
    () => new DiscreteModel({ ...tankOptions, ...patch } as typeof tankOptions);

  it('rejects A of the wrong shape', () => {
    expect(bad({ A: [[1, 0], [0, 1], [0, 0]] })).toThrow('A must be 3×3, got 3×2');
  });

  it('rejects a non-finite entry of A', () => {
    expect(bad({ A: [[1, 0, 0], [0, NaN, 0], [0, 0, 1]] })).toThrow('A[1][1] must be a finite number, got NaN');
  });

  it('rejects B whose rows do not match the state', () => {
    expect(bad({ B: [[0], [1]] })).toThrow('B must be 3×1, got 2×1');
  });

  it('rejects Q of the wrong size for B', () => {
    expect(bad({ Q: [[1, 0], [0, 1]] })).toThrow('Q must be 1×1, got 2×2');
  });

  it('rejects an asymmetric Q', () => {
    expect(bad({ B: undefined, Q: [[1, 0.1, 0], [0.2, 1, 0], [0, 0, 1]] })).toThrow(
      'Q is not symmetric: Q[0][1] = 0.1 but Q[1][0] = 0.2',
    );
  });

  it('rejects a Q that is not positive semi-definite', () => {
    const make = bad({ B: undefined, Q: [[1, 0, 0], [0, -0.02, 0], [0, 0, 1]] });
    expect(make).toThrow(ModelConfigError);
    expect(make).toThrow('Q is not positive semi-definite: eigenvalue -0.02');
  });

  it('rejects an infinite entry of Q', () => {
    expect(bad({ Q: [[Infinity]] })).toThrow('Q[0][0] must be a finite number, got Infinity');
  });

  it('rejects G whose rows do not match the state', () => {
    expect(bad({ G: [[1], [0]] })).toThrow('G must be 3×1, got 2×1');
  });

  it('rejects a non-positive sample period', () => {
    expect(bad({ stepS: 0 })).toThrow('stepS must be a positive finite number, got 0');
  });

  it('rejects state names that do not match A', () => {
    expect(bad({ stateNames: ['level', 'level_rate'] })).toThrow('A must be 2×2, got 3×3');
  });

  it('names the field in the error path', () => {
    try {
      bad({ stepS: -1 })();
    } catch (e) {
      expect(e).toBeInstanceOf(ModelConfigError);
      expect((e as ModelConfigError).path).toBe('stepS');
      return;
    }
    expect.unreachable('expected a ModelConfigError');
  });
});
