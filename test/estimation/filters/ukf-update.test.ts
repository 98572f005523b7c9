import { describe, expect, it } from 'vitest';
import { FilterWorkspace } from '../../../src/estimation/filters/filter-workspace.js';
import { unscentedUpdateInPlace } from '../../../src/estimation/filters/ukf-update.js';
import { UnscentedWorkspace } from '../../../src/estimation/filters/unscented-transform.js';
import { LinearMeasurement } from '../../../src/estimation/measurements/linear-measurement.js';
import { wrapAngle, type MeasurementModel } from '../../../src/estimation/measurements/measurement-model.js';

function expectClose(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): void {
  expect(actual.length).toBe(expected.length);
  for (let i = 0; i < expected.length; i++) {
    expect(Math.abs(actual[i]! - expected[i]!), `entry ${i}: ${actual[i]} vs ${expected[i]}`).toBeLessThanOrEqual(tol);
  }
}

const params = { alpha: 0.5, beta: 2, kappa: 1 };

/** Tank level sensor reading the first of [level, level_rate]. */
function levelSensor(): LinearMeasurement {
  return new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [1] });
}

/** A tug's heading read by a compass: h(x) = wrap(heading), innovations wrapped to (−π, π]. */
const compass: MeasurementModel = {
  dim: 1,
  stateDim: 2,
  linear: false,
  componentNames: ['heading'],
  R: Float64Array.of(0.01),
  normalizeInPlace() {},
  measureInto(x, yhat) { yhat[0] = wrapAngle(x[0]!); },
  jacobianInto(_x, H) { H.set([1, 0]); },
  innovationInto(y, yhat, nu) { nu[0] = wrapAngle(y[0]! - yhat[0]!); },
  initializeInPlace() { return false; },
};

describe('unscentedUpdateInPlace', () => {
  it('applies the optimal update of a linear sensor', () => {
    // REFERENCE-CHECKS C11 example 1 (exact rationals): P⁻ = [[4, 1], [1, 2]], H = [1, 0],
    // R = 1 give S = 5, K = [4/5, 1/5], P⁺ = [[4/5, 1/5], [1/5, 9/5]] (Simon 2006, ch. 5; from memory).
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    const x = Float64Array.of(0, 0);
    const P = Float64Array.of(4, 1, 1, 2);
    expect(unscentedUpdateInPlace(levelSensor(), Float64Array.of(2), Float64Array.of(1), Infinity, x, P, ws, uws)).toBe('applied');
    expectClose(x, [8 / 5, 2 / 5], 1e-12);
    expectClose(P, [4 / 5, 1 / 5, 1 / 5, 9 / 5], 1e-12);
  });

  it('leaves the NIS, the innovation and diag(S) in the workspace', () => {
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    unscentedUpdateInPlace(levelSensor(), Float64Array.of(2), Float64Array.of(1), Infinity, Float64Array.of(0, 0), Float64Array.of(4, 1, 1, 2), ws, uws);
    // ν = 2, S = 5, d² = 4/5 (C11 example 1).
    expect(ws.nu[0]!).toBeCloseTo(2, 12);
    expect(ws.sDiagonal[0]!).toBeCloseTo(5, 12);
    expect(ws.nis).toBeCloseTo(0.8, 12);
    expect(ws.lastM).toBe(1);
  });

  it('applies a vector update with the exact gain and covariance', () => {
    // REFERENCE-CHECKS C11 example 2: P⁻ = [[2, 1/2, 0], [1/2, 1, 1/4], [0, 1/4, 3]],
    // H = [[1, 0, 0], [0, 1, 1]], R = diag(1/2, 1); K and P⁺ as exact rationals.
    const sensor = new LinearMeasurement({ C: [1, 0, 0, 0, 1, 1], dim: 2, stateDim: 3, Rv: [0.5, 0, 0, 1] });
    const ws = new FilterWorkspace(3, 2);
    const uws = new UnscentedWorkspace(3, 2, params);
    const x = Float64Array.of(0, 0, 0);
    const P = Float64Array.of(2, 0.5, 0, 0.5, 1, 0.25, 0, 0.25, 3);
    expect(unscentedUpdateInPlace(sensor, Float64Array.of(1, 0), sensor.R, Infinity, x, P, ws, uws)).toBe('applied');
    // x⁺ = K·[1, 0]ᵀ = first column of K.
    expectClose(x, [43 / 54, 17 / 108, -13 / 108], 1e-12);
    expectClose(P, [
      43 / 108, 17 / 216, -13 / 216,
      17 / 216, 283 / 432, -191 / 432,
      -13 / 216, -191 / 432, 451 / 432,
    ], 1e-12);
  });

  it('leaves a posterior covariance that is exactly symmetric', () => {
    const sensor = new LinearMeasurement({ C: [1, 0.3, 0, -0.7, 1, 1], dim: 2, stateDim: 3, Rv: [0.5, 0.1, 0.1, 1] });
    const ws = new FilterWorkspace(3, 2);
    const uws = new UnscentedWorkspace(3, 2, params);
    const P = Float64Array.of(2, 0.5, 0.1, 0.5, 1, 0.25, 0.1, 0.25, 3);
    unscentedUpdateInPlace(sensor, Float64Array.of(1, 0), sensor.R, Infinity, Float64Array.of(0.2, 0, 1), P, ws, uws);
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expect(P[i * 3 + j]).toBe(P[j * 3 + i]);
  });

  it('averages a heading whose sigma points straddle ±π', () => {
    // tug-04 heads at π − 0.05 rad; the compass reads −π + 0.03, i.e. 0.08 rad further on.
    // On the circle h is the identity, so the UKF must equal the KF in unwrapped coordinates:
    // S = 0.04 + 0.01, K = [0.04, 0.01]/0.05 = [0.8, 0.2], x⁺ = x + 0.08 K, P⁺ = P − K S Kᵀ.
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, { alpha: 1, beta: 0, kappa: 1 });
    const x = Float64Array.of(Math.PI - 0.05, 0.2);
    const P = Float64Array.of(0.04, 0.01, 0.01, 0.09);
    const verdict = unscentedUpdateInPlace(compass, Float64Array.of(-Math.PI + 0.03), compass.R, Infinity, x, P, ws, uws);
    expect(verdict).toBe('applied');
    expect(ws.yhat[0]!).toBeCloseTo(Math.PI - 0.05, 12);
    expect(ws.nu[0]!).toBeCloseTo(0.08, 12);
    expect(ws.nis).toBeCloseTo(0.08 ** 2 / 0.05, 12);
    expectClose(x, [Math.PI - 0.05 + 0.064, 0.2 + 0.016], 1e-12);
    expectClose(P, [0.04 - 0.032, 0.01 - 0.008, 0.01 - 0.008, 0.09 - 0.002], 1e-12);
  });

  it('updates a state whose covariance is singular', () => {
    // tank-b's outlet offset is known exactly (zero variance) and a sensor reads offset + level:
    // S = 2 + 1, Pxy = [0, 2], K = [0, 2/3]; the known state must not move.
    const sensor = new LinearMeasurement({ C: [1, 1], dim: 1, stateDim: 2, Rv: [1] });
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    const x = Float64Array.of(1, 0);
    const P = Float64Array.of(0, 0, 0, 2);
    expect(unscentedUpdateInPlace(sensor, Float64Array.of(3), sensor.R, Infinity, x, P, ws, uws)).toBe('applied');
    expectClose(x, [1, 4 / 3], 1e-12);
    expectClose(P, [0, 0, 0, 2 / 3], 1e-12);
  });

  it('returns gate, leaving x and P untouched, when d² exceeds the threshold', () => {
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    const x = Float64Array.of(0, 0);
    const P = Float64Array.of(4, 1, 1, 2);
    const verdict = unscentedUpdateInPlace(levelSensor(), Float64Array.of(2), Float64Array.of(1), 0.5, x, P, ws, uws);
    expect(verdict).toBe('gate');
    expect(ws.nis).toBeCloseTo(0.8, 12);
    expect([...x]).toEqual([0, 0]);
    expect([...P]).toEqual([4, 1, 1, 2]);
  });

  it('returns numerics, leaving x and P untouched, when S is not positive definite', () => {
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    const x = Float64Array.of(0, 0);
    const P = Float64Array.of(4, 1, 1, 2);
    const verdict = unscentedUpdateInPlace(levelSensor(), Float64Array.of(2), Float64Array.of(-10), Infinity, x, P, ws, uws);
    expect(verdict).toBe('numerics');
    expect(Number.isNaN(ws.nis)).toBe(true);
    expect([...x]).toEqual([0, 0]);
    expect([...P]).toEqual([4, 1, 1, 2]);
  });

  it('returns numerics, leaving x and P untouched, for a measurement that is not finite', () => {
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    const x = Float64Array.of(0, 0);
    const P = Float64Array.of(4, 1, 1, 2);
    expect(unscentedUpdateInPlace(levelSensor(), Float64Array.of(Number.NaN), Float64Array.of(1), Infinity, x, P, ws, uws)).toBe('numerics');
    expect([...x]).toEqual([0, 0]);
    expect([...P]).toEqual([4, 1, 1, 2]);
  });

  it('returns numerics, leaving x and P untouched, when the prior covariance is not PSD', () => {
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(2, 1, params);
    const x = Float64Array.of(0, 0);
    const P = Float64Array.of(1, 3, 3, 1);
    expect(unscentedUpdateInPlace(levelSensor(), Float64Array.of(2), Float64Array.of(1), Infinity, x, P, ws, uws)).toBe('numerics');
    expect([...x]).toEqual([0, 0]);
    expect([...P]).toEqual([1, 3, 3, 1]);
  });

  it('throws when the unscented workspace does not fit the filter workspace', () => {
    const ws = new FilterWorkspace(2, 1);
    const uws = new UnscentedWorkspace(3, 1, params);
    expect(() => unscentedUpdateInPlace(levelSensor(), Float64Array.of(2), Float64Array.of(1), Infinity, Float64Array.of(0, 0), Float64Array.of(4, 1, 1, 2), ws, uws)).toThrow(/do not fit/);
  });
});
