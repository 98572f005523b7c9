import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Estimator, type EstimatorDefinition } from '../../src/estimation/estimator.js';
import { ConstantVelocityModel } from '../../src/estimation/models/constant-velocity-model.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import type { MeasurementModel } from '../../src/estimation/measurements/measurement-model.js';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { kalmanUpdateInPlace } from '../../src/estimation/filters/kalman-update.js';
import { minEigenvalue, asymmetry } from '../../src/estimation/linalg/symmetric.js';

// A 1-D constant-velocity track read by a position sensor (σ = 1) and a velocity sensor.
const process1d = () => new ConstantVelocityModel({ positionNames: ['p'], velocityNames: ['v'], spectralDensity: 0.5 });
const position = () => new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [1], componentNames: ['p'] });
const velocity = () => new LinearMeasurement({ C: [0, 1], dim: 1, stateDim: 2, Rv: [0.25], componentNames: ['v'] });

function estimator(overrides: Partial<EstimatorDefinition> = {}): Estimator {
  return new Estimator({
    process: process1d(),
    sensors: [{ name: 'pos', model: position() }, { name: 'vel', model: velocity() }],
    filter: 'kf',
    priorMean: [0, 0],
    priorCovariance: [1e4, 0, 0, 100],
    gateProbability: null,
    horizonS: 1e6,
    maxEntries: 256,
    futureToleranceS: 1e9,
    maxCoastS: 10,
    ...overrides,
  });
}

interface Reading { sensor: number; y: number; t: number }

function readings(count: number): Reading[] {
  const out: Reading[] = [];
  for (let k = 0; k < count; k++) {
    out.push({ sensor: 0, y: 2 * k + Math.sin(k), t: k * 1.0 });
    if (k % 3 === 1) out.push({ sensor: 1, y: 2 + 0.1 * Math.cos(k), t: k * 1.0 + 0.25 });
  }
  return out;
}

function feed(est: Estimator, list: readonly Reading[]) {
  const track = est.createTrack();
  const verdicts = list.map((r) => track.ingest(r.sensor, [r.y], null, r.t, 1e12));
  return { track, verdicts };
}

function expectClose(a: ArrayLike<number>, b: ArrayLike<number>, tol: number): void {
  expect(a.length).toBe(b.length);
  for (let i = 0; i < a.length; i++) expect(Math.abs(a[i]! - b[i]!)).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(b[i]!)));
}

describe('track', () => {
  it('initializes position from the first fix and leaves velocity at its prior', () => {
    const { track, verdicts } = feed(estimator(), [{ sensor: 0, y: 3.5, t: 10 }]);
    expect(verdicts).toEqual(['initialized']);
    expectClose(track.x, [3.5, 0], 1e-15);
    expectClose(track.P, [1, 0, 0, 100], 1e-15);
    expect(track.tS).toBe(10);
  });

  it('counts the initializing reading as accepted without giving it a NIS', () => {
    const { track } = feed(estimator(), [{ sensor: 0, y: 3.5, t: 10 }, { sensor: 0, y: 3.6, t: 11 }]);
    expect(track.stats[0]!.accepted).toBe(2);
    expect(track.stats[0]!.windowFill).toBe(1);
    expect(track.stats[0]!.lastTimeS).toBe(11);
  });

  it('equals the plain predict/update recursion for in-order data', () => {
    const list = readings(30);
    const { track } = feed(estimator(), list);
    const model = process1d();
    const sensors = [position(), velocity()];
    const ws = new FilterWorkspace(2, 1);
    const x = new Float64Array([list[0]!.y, 0]);
    const P = new Float64Array([1, 0, 0, 100]);
    let t = list[0]!.t;
    for (const r of list.slice(1)) {
      expect(kalmanPredictInPlace(model, r.t - t, x, P, ws)).toBe(true);
      const R = sensors[r.sensor]!.R;
      expect(kalmanUpdateInPlace(sensors[r.sensor]!, new Float64Array([r.y]), R, Infinity, x, P, ws)).toBe('applied');
      t = r.t;
    }
    expectClose(track.x, x, 1e-12);
    expectClose(track.P, P, 1e-12);
  });

  it('re-filters from the insertion point when a late fix arrives', () => {
    const list = readings(20);
    const late = list.splice(12, 1)[0]!;
    const est = estimator();
    const { track } = feed(est, list);
    expect(track.ingest(late.sensor, [late.y], null, late.t, 1e12)).toBe('late-applied');
    const reference = feed(est, [...list.slice(0, 12), late, ...list.slice(12)]).track;
    expectClose(track.x, reference.x, 1e-12);
    expectClose(track.P, reference.P, 1e-12);
    expect(track.stats[late.sensor]!.late).toBeGreaterThan(0);
  });

  it('gives the estimates of sorted input whatever the arrival order within the horizon', () => {
    const list = readings(25);
    const sorted = feed(estimator(), list).track;
    fc.assert(
      fc.property(fc.shuffledSubarray(list.map((_, i) => i), { minLength: list.length, maxLength: list.length }), (order) => {
        const shuffled = feed(estimator(), order.map((i) => list[i]!)).track;
        expectClose(shuffled.x, sorted.x, 1e-9);
        expectClose(shuffled.P, sorted.P, 1e-9);
      }),
      { numRuns: 60, seed: 42 },
    );
  });

  it('applies simultaneous readings in sensor order whatever their arrival order', () => {
    const a: Reading[] = [{ sensor: 0, y: 0, t: 0 }, { sensor: 1, y: 1.5, t: 2 }, { sensor: 0, y: 4.2, t: 2 }];
    const b: Reading[] = [a[0]!, a[2]!, a[1]!];
    const ta = feed(estimator(), a).track;
    const tb = feed(estimator(), b).track;
    expectClose(ta.x, tb.x, 1e-12);
    expectClose(ta.P, tb.P, 1e-12);
  });

  it('drops an exact repeat of a reading as a duplicate', () => {
    const { track, verdicts } = feed(estimator(), [{ sensor: 0, y: 1, t: 0 }, { sensor: 0, y: 2, t: 1 }, { sensor: 0, y: 1, t: 0 }]);
    expect(verdicts[2]).toBe('duplicate');
    expect(track.stats[0]!.rejectionCount("duplicate")).toBe(1);
  });

  it('drops data older than the horizon as too late', () => {
    const { track } = feed(estimator({ horizonS: 5 }), [{ sensor: 0, y: 1, t: 0 }, { sensor: 0, y: 2, t: 10 }]);
    const before = Float64Array.from(track.x);
    expect(track.ingest(0, [1.5], null, 4, 1e12)).toBe('too-late');
    expectClose(track.x, before, 0);
  });

  it('drops data older than the evicted part of a full history as too late', () => {
    const est = estimator({ maxEntries: 16, snapshotEvery: 4 });
    const list = Array.from({ length: 40 }, (_, k) => ({ sensor: 0, y: k, t: k }));
    const { track } = feed(est, list);
    expect(track.history.count).toBeLessThanOrEqual(16);
    expect(track.ingest(0, [3.3], null, 3.5, 1e12)).toBe('too-late');
    expect(track.ingest(0, [38.4], null, 38.5, 1e12)).toBe('late-applied');
  });

  it('rejects a time stamp beyond the clock-skew tolerance as future', () => {
    const track = estimator({ futureToleranceS: 2 }).createTrack();
    expect(track.ingest(0, [1], null, 103, 100)).toBe('future');
    expect(track.ingest(0, [1], null, 101.5, 100)).toBe('initialized');
  });

  it('leaves the state untouched when the gate rejects an outlier', () => {
    const list = readings(10);
    const { track } = feed(estimator({ gateProbability: 0.99 }), list);
    const x = Float64Array.from(track.x);
    const P = Float64Array.from(track.P);
    expect(track.ingest(0, [1e4], null, 20, 1e12)).toBe('gate');
    expectClose(track.x, x, 0);
    expectClose(track.P, P, 0);
    expect(track.stats[0]!.rejectionCount("gate")).toBe(1);
  });

  it('re-initializes from the next measurement after a run of gate rejections', () => {
    const est = estimator({ gateProbability: 0.99, maxConsecutiveRejections: 3, onRejectionRun: 'reinitialize' });
    const { track } = feed(est, readings(10));
    for (let k = 0; k < 3; k++) expect(track.ingest(0, [500], null, 20 + k, 1e12)).toBe('gate');
    expect(track.initialized).toBe(false);
    expect(track.counters.reinitializations).toBe(1);
    expect(track.ingest(0, [501], null, 24, 1e12)).toBe('initialized');
    expect(track.x[0]).toBeCloseTo(501, 12);
  });

  it('keeps the track when one sensor is rejected in a run while another still agrees', () => {
    const est = estimator({ gateProbability: 0.99, maxConsecutiveRejections: 3, onRejectionRun: 'reinitialize' });
    const { track } = feed(est, readings(10));
    const before = track.counters.reinitializations;
    for (let k = 0; k < 6; k++) {
      expect(track.ingest(0, [500], null, 20 + k, 1e12)).toBe('gate');
      expect(track.ingest(1, [track.x[1]!], null, 20.5 + k, 1e12)).toBe('applied');
    }
    expect(track.counters.reinitializations).toBe(before);
    expect(track.initialized).toBe(true);
    expect(track.stats[0]!.consecutiveGateRejections).toBe(6);
  });

  it('inflates P and keeps going after a run of gate rejections under the inflate policy', () => {
    const est = estimator({ gateProbability: 0.99, maxConsecutiveRejections: 2, onRejectionRun: 'inflate', inflateFactor: 1e6 });
    const { track } = feed(est, readings(10));
    const p00 = track.P[0]!;
    track.ingest(0, [300], null, 20, 1e12);
    track.ingest(0, [300], null, 21, 1e12);
    expect(track.counters.inflations).toBe(1);
    expect(track.P[0]!).toBeGreaterThan(1e5 * p00);
    expect(track.ingest(0, [300], null, 22, 1e12)).toBe('applied');
  });

  it('refuses hostile values without touching the state', () => {
    const { track } = feed(estimator(), readings(5));
    const x = Float64Array.from(track.x);
    for (const bad of [[Number.NaN], [Infinity], [1e308], [1, 2], []]) {
      expect(track.ingest(0, bad, null, 30, 1e12)).toBe('malformed');
    }
    expect(track.ingest(0, [1], [-1], 30, 1e12)).toBe('malformed');
    expect(track.ingest(0, [1], [Number.NaN], 30, 1e12)).toBe('malformed');
    expect(track.ingest(0, [1], null, Number.NaN, 1e12)).toBe('malformed');
    expectClose(track.x, x, 0);
    expect(track.stats[0]!.rejectionCount("malformed")).toBe(8);
  });

  it('refuses a step whose result is not finite and recovers from the next measurement', () => {
    const hostile: MeasurementModel = {
      ...position(),
      dim: 1, stateDim: 2, linear: false, componentNames: ['p'], R: new Float64Array([1]),
      normalizeInPlace: () => {},
      measureInto: (_x, yhat) => { yhat[0] = Number.NaN; },
      jacobianInto: (_x, H) => { H[0] = 1; H[1] = 0; },
      innovationInto: (y, yhat, nu) => { nu[0] = y[0]! - yhat[0]!; },
      initializeInPlace: () => false,
    };
    const est = new Estimator({ process: process1d(), sensors: [{ name: 'pos', model: position() }, { name: 'bad', model: hostile }], gateProbability: null });
    const track = est.createTrack();
    track.ingest(0, [1], null, 0, 1e12);
    expect(track.ingest(1, [1], null, 1, 1e12)).toBe('numerics');
    expect(track.counters.numericRefusals).toBe(1);
    expect(track.initialized).toBe(false);
    expect(Array.from(track.x).every(Number.isFinite)).toBe(true);
    expect(track.ingest(0, [7], null, 2, 1e12)).toBe('initialized');
  });

  it('coasts between measurements and turns stale past the coast limit', () => {
    const { track } = feed(estimator({ maxCoastS: 10 }), [{ sensor: 0, y: 0, t: 0 }, { sensor: 0, y: 2, t: 1 }]);
    expect(track.coastS(5)).toBeCloseTo(4, 12);
    expect(track.isStale(5)).toBe(false);
    expect(track.isStale(11.5)).toBe(true);
  });

  it('predicts to any later time without changing the track', () => {
    const { track } = feed(estimator(), readings(6));
    const x = new Float64Array(2);
    const P = new Float64Array(4);
    const before = Float64Array.from(track.x);
    expect(track.predictInto(track.tS + 3, x, P)).toBe(true);
    expect(x[0]).toBeCloseTo(track.x[0]! + 3 * track.x[1]!, 12);
    expect(P[0]!).toBeGreaterThan(track.P[0]!);
    expectClose(track.x, before, 0);
    expect(track.predictInto(track.tS - 1, x, P)).toBe(false);
  });

  it('keeps P symmetric positive semi-definite over a long random run', () => {
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.double({ min: 0.01, max: 5, noNaN: true }), fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.boolean()), { minLength: 50, maxLength: 300 }), (steps) => {
        const track = estimator({ gateProbability: 0.999 }).createTrack();
        let t = 0;
        for (const [dt, y, which] of steps) {
          t += dt;
          track.ingest(which ? 1 : 0, [y], null, t, 1e12);
          expect(asymmetry(track.P, 2)).toBe(0);
          expect(minEigenvalue(track.P, 2)).toBeGreaterThanOrEqual(-1e-9 * Math.max(1, track.P[0]!, track.P[3]!));
          expect(Array.from(track.x).every(Number.isFinite)).toBe(true);
        }
      }),
      { numRuns: 40, seed: 7 },
    );
  });

  it('never stores a non-finite state whatever the input', () => {
    const anyNumber = fc.oneof(fc.double(), fc.constant(1e308), fc.constant(-1e308), fc.constant(Number.NaN), fc.constant(Infinity));
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.nat(1), fc.array(anyNumber, { maxLength: 3 }), fc.option(fc.array(anyNumber, { maxLength: 2 })), anyNumber), { maxLength: 80 }), (inputs) => {
        const track = estimator({ gateProbability: 0.99 }).createTrack();
        for (const [sensor, y, R, t] of inputs) {
          track.ingest(sensor, y, R ?? null, t, 1e12);
          expect(Array.from(track.x).every(Number.isFinite)).toBe(true);
          expect(Array.from(track.P).every(Number.isFinite)).toBe(true);
        }
      }),
      { numRuns: 200, seed: 11 },
    );
  });
});
