import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { FixedLagSmoother } from '../../../src/estimation/filters/fixed-lag-smoother.js';
import { smoothBatch, type SmootherStep } from '../../../src/estimation/filters/rts-smoother.js';

function expectClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) {
    expect(Math.abs(actual[i]! - expected[i]!), `entry ${i}: ${actual[i]} vs ${expected[i]}`).toBeLessThanOrEqual(tol);
  }
}

const I2 = Float64Array.of(1, 0, 0, 1);

/**
 * A scalar-position KF for tug-07's odometer (state [distance, speed]), written out by hand so
 * these tests do not depend on the filter modules: CV with A = [[1, dt], [0, 1]], Q = q·CWNA,
 * H = [1, 0], R = r. Each entry of updates is (dtS, reading, r); dtS = 0 means a second update
 * at the same time stamp (A = I, prediction = previous filtered estimate).
 */
function filterSteps(updates: ReadonlyArray<readonly [number, number, number]>, q = 0.3): SmootherStep[] {
  let x = [0, 1];
  let P = [4, 0, 0, 1];
  let t = 0;
  const steps: SmootherStep[] = [];
  updates.forEach(([dt, y, r], k) => {
    t += dt;
    const A = k === 0 || dt === 0 ? [1, 0, 0, 1] : [1, dt, 0, 1];
    const Q = k === 0 || dt === 0 ? [0, 0, 0, 0] : [q * dt ** 3 / 3, q * dt ** 2 / 2, q * dt ** 2 / 2, q * dt];
    const xp = [x[0]! + A[1]! * x[1]!, x[1]!];
    const AP = [P[0]! + A[1]! * P[2]!, P[1]! + A[1]! * P[3]!, P[2]!, P[3]!];
    const Pp = [AP[0]! + AP[1]! * A[1]! + Q[0]!, AP[1]! + Q[1]!, AP[2]! + AP[3]! * A[1]! + Q[2]!, AP[3]! + Q[3]!];
    const s = Pp[0]! + r;
    const K = [Pp[0]! / s, Pp[2]! / s];
    const nu = y - xp[0]!;
    x = [xp[0]! + K[0]! * nu, xp[1]! + K[1]! * nu];
    P = [Pp[0]! - K[0]! * Pp[0]!, Pp[1]! - K[0]! * Pp[1]!, Pp[2]! - K[1]! * Pp[0]!, Pp[3]! - K[1]! * Pp[1]!];
    const sym = 0.5 * (P[1]! + P[2]!);
    P[1] = sym;
    P[2] = sym;
    steps.push({ tS: t, xFiltered: Float64Array.from(x), PFiltered: Float64Array.from(P), xPredicted: Float64Array.from(xp), PPredicted: Float64Array.from(Pp), A: Float64Array.from(A) });
  });
  return steps;
}

function push(fls: FixedLagSmoother, s: SmootherStep): boolean {
  return fls.push(s.tS, s.xPredicted!, s.PPredicted!, s.A!, s.xFiltered, s.PFiltered);
}

const readings: Array<[number, number, number]> = [[0, 1.1, 1], [1, 1.9, 1], [1, 3.2, 1], [0.5, 3.5, 2], [1.5, 5.3, 1], [1, 6.0, 1], [1, 7.2, 1]];

describe('FixedLagSmoother', () => {
  it('reports nothing, writing nothing, before the first step', () => {
    const fls = new FixedLagSmoother(2, 2);
    const x = Float64Array.of(7, 7);
    expect(fls.smoothedInto(x, new Float64Array(4))).toBeNaN();
    expect([...x]).toEqual([7, 7]);
    expect(fls.filledSteps).toBe(0);
  });

  it('equals the batch RTS estimate of step k − L on the data up to k, for any lag', () => {
    fc.assert(fc.property(
      fc.integer({ min: 0, max: 5 }),
      fc.array(fc.tuple(fc.double({ min: 0.1, max: 3, noNaN: true }), fc.double({ min: -10, max: 10, noNaN: true }), fc.double({ min: 0.1, max: 5, noNaN: true })), { minLength: 1, maxLength: 12 }),
      (lag, updates) => {
        const steps = filterSteps(updates);
        const fls = new FixedLagSmoother(2, lag);
        const x = new Float64Array(2);
        const P = new Float64Array(4);
        steps.forEach((s, k) => {
          expect(push(fls, s)).toBe(true);
          const target = Math.max(0, k - lag);
          expect(fls.smoothedInto(x, P)).toBe(steps[target]!.tS);
          const ref = smoothBatch(steps.slice(0, k + 1))[target]!;
          expectClose(x, ref.x, 1e-9 * (1 + Math.abs(ref.x[0]!) + Math.abs(ref.x[1]!)));
          expectClose(P, ref.P, 1e-9);
        });
      },
    ), { numRuns: 60 });
  });

  it('reports a shorter lag until the ring is full', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 3);
    push(fls, steps[0]!);
    push(fls, steps[1]!);
    expect(fls.filledSteps).toBe(2);
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    expect(fls.smoothedInto(x, P)).toBe(steps[0]!.tS);
    expectClose(x, smoothBatch(steps.slice(0, 2))[0]!.x, 1e-12);
  });

  it('reports the newest filtered estimate with a lag of zero', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 0);
    steps.forEach((s) => push(fls, s));
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    expect(fls.smoothedInto(x, P)).toBe(steps[6]!.tS);
    expect([...x]).toEqual([...steps[6]!.xFiltered]);
    expect([...P]).toEqual([...steps[6]!.PFiltered]);
  });

  it('smooths two updates at one time stamp like one update with their combined information', () => {
    // Two readings of 3.2 with R = 2 carry the information of one reading of 3.2 with R = 1.
    const merged = filterSteps([[0, 1.1, 1], [1, 1.9, 1], [1, 3.2, 1], [1, 3.8, 1], [1, 5.3, 1]]);
    const split = filterSteps([[0, 1.1, 1], [1, 1.9, 1], [1, 3.2, 2], [0, 3.2, 2], [1, 3.8, 1], [1, 5.3, 1]]);
    expect([...split[3]!.A!]).toEqual([...I2]);
    const fls = new FixedLagSmoother(2, 5);
    split.forEach((s) => expect(push(fls, s)).toBe(true));
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    fls.smoothedInto(x, P);
    const ref = smoothBatch(merged)[0]!;
    expectClose(x, ref.x, 1e-12);
    expectClose(P, ref.P, 1e-12);
  });

  it('refuses a step earlier than the newest one, and a time stamp that is not finite', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 2);
    push(fls, steps[0]!);
    push(fls, steps[2]!);
    expect(push(fls, steps[1]!)).toBe(false);
    expect(fls.push(Number.NaN, I2.subarray(0, 2), I2, I2, I2.subarray(0, 2), I2)).toBe(false);
    expect(fls.filledSteps).toBe(2);
  });

  it('drops the steps later than a time stamp and smooths like a ring that never held them', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 3);
    steps.forEach((s) => push(fls, s));
    expect(fls.filledSteps).toBe(4);
    // Steps 3..6 held (tS 2.5, 4, 5, 6); a late reading at 4.5 drops tS 5 and 6.
    expect(fls.truncateAfter(4.5)).toBe(2);
    expect(fls.filledSteps).toBe(2);
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    expect(fls.smoothedInto(x, P)).toBe(steps[3]!.tS);
    expectClose(x, smoothBatch(steps.slice(0, 5))[3]!.x, 1e-12);
  });

  it('reaches a full lag again once the dropped steps are pushed anew', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 3);
    steps.forEach((s) => push(fls, s));
    fls.truncateAfter(4.5);
    // Re-filtered steps after the late reading (here simply different readings).
    const refiltered = filterSteps([...readings.slice(0, 5), [0.5, 5.8, 1], [0.5, 6.1, 1]]);
    expect(push(fls, refiltered[5]!)).toBe(true);
    expect(fls.filledSteps).toBe(3);
    expect(push(fls, refiltered[6]!)).toBe(true);
    expect(fls.filledSteps).toBe(4);
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    expect(fls.smoothedInto(x, P)).toBe(refiltered[3]!.tS);
    expectClose(x, smoothBatch(refiltered)[3]!.x, 1e-12);
    expectClose(P, smoothBatch(refiltered)[3]!.P, 1e-12);
  });

  it('forgets everything on reset', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 2);
    steps.forEach((s) => push(fls, s));
    fls.reset();
    expect(fls.filledSteps).toBe(0);
    expect(fls.smoothedInto(new Float64Array(2), new Float64Array(4))).toBeNaN();
    push(fls, steps[0]!);
    expect(fls.filledSteps).toBe(1);
  });

  it('counts the steps that restart from the filtered estimate', () => {
    const steps = filterSteps(readings);
    const fls = new FixedLagSmoother(2, 2);
    push(fls, steps[0]!);
    push(fls, { ...steps[1]!, PPredicted: new Float64Array(4) });
    push(fls, steps[2]!);
    const x = new Float64Array(2);
    fls.smoothedInto(x, new Float64Array(4));
    expect(fls.lastPassRestarts).toBe(1);
    expect([...x]).toEqual([...steps[0]!.xFiltered]);
  });

  it('rejects a state dimension or lag that is not a valid integer', () => {
    expect(() => new FixedLagSmoother(0, 2)).toThrow(/state dimension/);
    expect(() => new FixedLagSmoother(2, -1)).toThrow(/lag/);
    expect(() => new FixedLagSmoother(2, 1.5)).toThrow(/lag/);
  });
});
