import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { ContinuousModel } from '../../../src/estimation/models/continuous-model.js';
import { discretizeVanLoan } from '../../../src/estimation/models/van-loan.js';
import { expectCloseToMatrix } from './close-to-matrix.js';

/** A damped level oscillation for tank-a: level and level_rate. */
const tankOscillator = (cacheEntries?: number): ContinuousModel =>
  new ContinuousModel({
    F: [[0, 1], [-4, -0.8]],
    G: [[0], [1]],
    Qc: [[0.5]],
    stateNames: ['level', 'level_rate'],
    ...(cacheEntries === undefined ? {} : { cacheEntries }),
  });

function step(m: ContinuousModel, dtS: number): { A: Float64Array; Q: Float64Array } {
  const A = new Float64Array(m.dim * m.dim);
  const Q = new Float64Array(m.dim * m.dim);
  m.discretizeInto(dtS, A, Q);
  return { A, Q };
}

describe('ContinuousModel', () => {
  it('equals a direct Van Loan discretization', () => {
    const { A, Q } = step(tankOscillator(), 0.2);
    const ref = discretizeVanLoan(
      Float64Array.from([0, 1, -4, -0.8]),
      Float64Array.from([0, 1]),
      Float64Array.from([0.5]),
      2,
      1,
      0.2,
    );
    expectCloseToMatrix(A, ref.A, 0);
    expectCloseToMatrix(Q, ref.Q, 0);
  });

  it('returns bit-identical results on a cache hit', () => {
    const m = tankOscillator();
    const first = step(m, 0.37);
    const second = step(m, 0.37);
    expect(Array.from(second.A)).toEqual(Array.from(first.A));
    expect(Array.from(second.Q)).toEqual(Array.from(first.Q));
    expect(m.cachedSteps).toBe(1);
  });

  it('does not hand out its cached buffers (the caller may overwrite them)', () => {
    const m = tankOscillator();
    const first = step(m, 0.5);
    first.A.fill(7);
    const again = step(m, 0.5);
    expect(again.A[0]).not.toBe(7);
  });

  it('keeps the cache within its bound under many distinct dt values', () => {
    const m = tankOscillator(4);
    for (let i = 1; i <= 20; i++) step(m, i * 0.05);
    expect(m.cachedSteps).toBe(4);
  });

  it('gives the same result after its entry was evicted and recomputed', () => {
    const m = tankOscillator(1);
    const before = step(m, 0.3);
    step(m, 0.9);
    const after = step(m, 0.3);
    expectCloseToMatrix(after.Q, before.Q, 0);
  });

  it('gives A = I and Q = 0 for dt = 0 without caching', () => {
    const m = tankOscillator();
    const { A, Q } = step(m, 0);
    expect(Array.from(A)).toEqual([1, 0, 0, 1]);
    expect(Array.from(Q)).toEqual([0, 0, 0, 0]);
    expect(m.cachedSteps).toBe(0);
  });

  it('writes NaN for a non-finite dt', () => {
    const { A, Q } = step(tankOscillator(), Number.POSITIVE_INFINITY);
    expect([...A, ...Q].every(Number.isNaN)).toBe(true);
  });

  it('defaults G to the identity and names states x0, x1, …', () => {
    const m = new ContinuousModel({ F: [[-0.5, 0], [0, -0.25]], Qc: [[0.1, 0], [0, 0.2]] });
    expect(m.stateNames).toEqual(['x0', 'x1']);
    expect(m.noiseDim).toBe(2);
    const { A } = step(m, 2);
    expectCloseToMatrix(A, [Math.exp(-1), 0, 0, Math.exp(-0.5)], 1e-15);
  });

  it('produces a symmetric PSD Q for random stable oscillators and steps', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 20, noNaN: true }),
        fc.double({ min: 0, max: 5, noNaN: true }),
        fc.double({ min: 0.001, max: 5, noNaN: true }),
        (k, c, dtS) => {
          const m = new ContinuousModel({ F: [[0, 1], [-k, -c]], G: [[0], [1]], Qc: [[1]] });
          const { Q } = step(m, dtS);
          const det = Q[0]! * Q[3]! - Q[1]! * Q[2]!;
          const scale = Math.max(Q[0]!, Q[3]!) ** 2;
          return Q[1] === Q[2] && Q[0]! >= 0 && Q[3]! >= 0 && det >= -1e-12 * scale;
        },
      ),
      { numRuns: 100 },
    );
  });

  it('rejects F of the wrong shape', () => {
    expect(() => new ContinuousModel({ F: [[0, 1, 0], [0, 0, 1]], Qc: [[1]], stateNames: ['a', 'b'] })).toThrow(
      'F must be 2×2, got 2×3',
    );
  });

  it('rejects G whose rows do not match the state', () => {
    expect(() => new ContinuousModel({ F: [[0, 1], [0, 0]], G: [[0], [1], [0]], Qc: [[1]] })).toThrow(
      'G must be 2×1, got 3×1',
    );
  });

  it('rejects a Qc that is not positive semi-definite', () => {
    expect(() => new ContinuousModel({ F: [[0, 1], [0, 0]], G: [[0], [1]], Qc: [[-0.5]] })).toThrow(
      'Qc is not positive semi-definite: eigenvalue -0.5',
    );
  });
});
