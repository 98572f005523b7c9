import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { Estimator, type EstimatorDefinition, type FilterKind } from '../../src/estimation/estimator.js';
import { ConstantVelocityModel } from '../../src/estimation/models/constant-velocity-model.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { decodeCheckpointNumber, encodeCheckpointNumber } from '../../src/estimation/checkpoint-number.js';
import { restoreTrack, trackToCheckpoint, type TrackCheckpoint } from '../../src/estimation/track-checkpoint.js';
import type { Track } from '../../src/estimation/track.js';

// A yard tug in the plane: state (east, north, v_east, v_north), a position fix (σ = 3 m) and a
// velocity reading from the wheel odometry.
function estimator(overrides: Partial<EstimatorDefinition> = {}): Estimator {
  return new Estimator({
    process: new ConstantVelocityModel({ spectralDensity: 0.5 }),
    sensors: [
      { name: 'fix', model: new LinearMeasurement({ C: [1, 0, 0, 0, 0, 1, 0, 0], dim: 2, stateDim: 4, Rv: [9, 0, 0, 9] }) },
      { name: 'odometry', model: new LinearMeasurement({ C: [0, 0, 1, 0, 0, 0, 0, 1], dim: 2, stateDim: 4, Rv: [0.04, 0, 0, 0.04] }) },
    ],
    filter: 'kf',
    gateProbability: null,
    futureToleranceS: 1e9,
    maxEntries: 16,
    snapshotEvery: 4,
    ...overrides,
  });
}

interface Reading { sensor: number; y: [number, number]; R: number[] | null; t: number }

/** tug-03 driving east at 2 m/s and north at 0.5 m/s, with a deterministic wobble as noise. */
function fix(t: number, R: number[] | null = null): Reading {
  return { sensor: 0, y: [2 * t + 3 * Math.sin(1.7 * t), 0.5 * t + 2 * Math.cos(2.3 * t)], R, t };
}

function odometry(t: number): Reading {
  return { sensor: 1, y: [2 + 0.1 * Math.sin(t), 0.5 + 0.1 * Math.cos(t)], R: null, t };
}

function ingestAll(track: Track, list: readonly Reading[]): string[] {
  return list.map((r) => track.ingest(r.sensor, r.y, r.R, r.t, 1e12));
}

/** 30 s of driving, with own covariances, a late fix and enough entries to evict chunks. */
function history(): Reading[] {
  const out: Reading[] = [];
  for (let t = 0; t < 30; t++) {
    if (t !== 22) out.push(fix(t, t % 5 === 2 ? [16, 1, 1, 25] : null));
    if (t % 3 === 1) out.push(odometry(t + 0.5));
    if (t === 25) out.push(fix(22)); // arrives three seconds late
  }
  return out;
}

/** What comes after the checkpoint: in-order data, a late fix inside the horizon, a repeat. */
function further(): Reading[] {
  return [fix(30), odometry(30.5), fix(31), fix(33, [4, 0, 0, 4]), fix(32), fix(33, [4, 0, 0, 4]), odometry(34.5), fix(35), fix(29.5)];
}

function fed(est: Estimator): Track {
  const track = est.createTrack();
  ingestAll(track, history());
  return track;
}

function throughJson(value: unknown): unknown {
  return JSON.parse(JSON.stringify(value));
}

function restored(est: Estimator, checkpoint: unknown): Track {
  const result = restoreTrack(est, throughJson(checkpoint));
  if (!result.ok) throw new Error(`restore failed: ${result.reason}`);
  return result.track;
}

/** A JSON copy of a checkpoint with one change made by `edit`. */
function edited(checkpoint: TrackCheckpoint, edit: (c: any) => void): unknown {
  const copy = throughJson(checkpoint);
  edit(copy);
  return copy;
}

describe('track checkpoint', () => {
  it('survives JSON unchanged', () => {
    const checkpoint = trackToCheckpoint(fed(estimator()));
    expect(throughJson(checkpoint)).toEqual(checkpoint);
  });

  it('restores a track whose checkpoint equals the original one', () => {
    const est = estimator();
    const checkpoint = trackToCheckpoint(fed(est));
    expect(trackToCheckpoint(restored(est, checkpoint))).toEqual(checkpoint);
  });

  it('writes P as its upper triangle and only the live part of the history', () => {
    const track = fed(estimator());
    const checkpoint = trackToCheckpoint(track);
    expect(checkpoint.P).toEqual([0, 1, 2, 3, 5, 6, 7, 10, 11, 15].map((k) => track.P[k]));
    expect(track.history.evicted).toBeGreaterThan(0);
    expect(checkpoint.history.entries).toHaveLength(track.history.count * track.history.entryStride);
    expect(checkpoint.history.snapshots).toHaveLength(Math.ceil(track.history.count / 4) * track.history.snapshotStride);
  });

  it('encodes the time and base time of an uninitialized track as strings', () => {
    const checkpoint = trackToCheckpoint(estimator().createTrack());
    expect(checkpoint.tS).toBe('NaN');
    expect(checkpoint.history.baseTimeS).toBe('-Infinity');
    const track = restored(estimator(), checkpoint);
    expect(track.initialized).toBe(false);
    expect(track.tS).toBeNaN();
    expect(track.history.baseTimeS).toBe(Number.NEGATIVE_INFINITY);
  });

  it.each([
    [Number.NaN, 'NaN'],
    [Number.POSITIVE_INFINITY, 'Infinity'],
    [Number.NEGATIVE_INFINITY, '-Infinity'],
    [-0, '-0'],
    [0, 0],
    [-1.25e-300, -1.25e-300],
  ])('encodes %s as %j and decodes it back exactly', (value, encoded) => {
    expect(encodeCheckpointNumber(value)).toBe(encoded);
    expect(Object.is(decodeCheckpointNumber(throughJson(encoded)), value)).toBe(true);
  });

  it('restores a negative zero in the state as a negative zero', () => {
    const est = estimator();
    const track = fed(est);
    track.x[3] = -0;
    expect(Object.is(restored(est, trackToCheckpoint(track)).x[3], -0)).toBe(true);
  });

  it.each<FilterKind>(['kf', 'ekf', 'ukf'])('continues exactly as the original would (%s)', (filter) => {
    const est = estimator({ filter, gateProbability: 0.999 });
    const original = fed(est);
    const copy = restored(est, trackToCheckpoint(original));
    const verdicts = ingestAll(original, further());
    expect(ingestAll(copy, further())).toEqual(verdicts);
    expect(verdicts).toContain('late-applied');
    expect(verdicts).toContain('duplicate');
    expect(copy.x).toEqual(original.x);
    expect(copy.P).toEqual(original.P);
    expect(copy.tS).toBe(original.tS);
    expect(trackToCheckpoint(copy)).toEqual(trackToCheckpoint(original));
  });

  it('restarts the smoother empty while the estimate carries on', () => {
    const est = estimator({ lagSteps: 2 });
    const original = fed(est);
    const copy = restored(est, trackToCheckpoint(original));
    const x = new Float64Array(4);
    const P = new Float64Array(16);
    expect(original.smoothedInto(x, P)).not.toBeNaN();
    expect(copy.smoothedInto(x, P)).toBeNaN();
    ingestAll(copy, [fix(30), fix(31), fix(32)]);
    expect(copy.smoothedInto(x, P)).toBe(30);
  });

  it('rejects a checkpoint for an estimator with a different state dimension', () => {
    const one = new Estimator({
      process: new ConstantVelocityModel({ positionNames: ['p'], velocityNames: ['v'], spectralDensity: 0.5 }),
      sensors: [{ name: 'fix', model: new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [1] }) }],
      filter: 'kf',
    });
    const result = restoreTrack(one, throughJson(trackToCheckpoint(fed(estimator()))));
    expect(result).toEqual({ ok: false, reason: 'x.length must be 2, got 4' });
  });

  it('rejects a checkpoint for an estimator with a different history size', () => {
    const result = restoreTrack(estimator({ maxEntries: 32 }), throughJson(trackToCheckpoint(fed(estimator()))));
    expect(result).toEqual({ ok: false, reason: 'history.capacity must be 32 (from the estimator), got 16' });
  });

  it('rejects a checkpoint that is not an object', () => {
    expect(restoreTrack(estimator(), [1, 2])).toEqual({ ok: false, reason: 'checkpoint must be an object, got an array of 2' });
  });

  const corruptions: [string, string, (c: any) => void][] = [
    ['another version', 'version', (c) => (c.version = 2)],
    ['an initialized flag that is not a boolean', 'initialized', (c) => (c.initialized = 'yes')],
    ['no time for an initialized track', 'tS', (c) => (c.tS = 'NaN')],
    ['a time that is not a number', 'tS', (c) => (c.tS = {})],
    ['x of the wrong length', 'x.length', (c) => c.x.pop()],
    ['a non-finite x', 'x[1]', (c) => (c.x[1] = 'Infinity')],
    ['an x that is not a number', 'x[0]', (c) => (c.x[0] = 'twelve')],
    ['P of the wrong length', 'P.length', (c) => c.P.push(0)],
    ['a non-finite P', 'P[4]', (c) => (c.P[4] = 'NaN')],
    ['a P that is not positive semi-definite', 'P', (c) => (c.P[0] = -1)],
    ['no history', 'history', (c) => delete c.history],
    ['another entry stride', 'history.entryStride', (c) => (c.history.entryStride += 1)],
    ['another snapshot interval', 'history.snapshotEvery', (c) => (c.history.snapshotEvery = 8)],
    ['a count beyond the capacity', 'history.count', (c) => (c.history.count = 17)],
    ['a fractional eviction count', 'history.evicted', (c) => (c.history.evicted = 1.5)],
    ['a NaN base time', 'history.baseTimeS', (c) => (c.history.baseTimeS = 'NaN')],
    ['entries that do not match the count', 'history.entries.length', (c) => (c.history.count -= 1)],
    ['a non-finite entry value', 'history.entries[3]', (c) => (c.history.entries[3] = '-Infinity')],
    ['an entry at the base time', 'history.entries[0]', (c) => (c.history.entries[0] = c.history.baseTimeS)],
    ['entries out of order', 'history.entries[8]', (c) => (c.history.entries[8] = c.history.entries[0] - 0.5)],
    ['an unknown sensor index', 'history.entries[1]', (c) => (c.history.entries[1] = 2)],
    ['an own-covariance flag that is not 0 or 1', 'history.entries[2]', (c) => (c.history.entries[2] = 0.5)],
    ['an own covariance that is not positive definite', 'history.entries[5]', (c) => ownCovariance(c, [-1, 0, 1])],
    ['snapshots that do not match the count', 'history.snapshots.length', (c) => c.history.snapshots.pop()],
    ['a snapshot flag that is not 0 or 1', 'history.snapshots[1]', (c) => (c.history.snapshots[1] = 2)],
    ['a non-finite snapshot state', 'history.snapshots[3]', (c) => (c.history.snapshots[3] = 'NaN')],
    ['an initialized snapshot without a time', 'history.snapshots[0]', (c) => ((c.history.snapshots[0] = 'NaN'), (c.history.snapshots[1] = 1))],
    ['a snapshot P that is not positive semi-definite', 'history.snapshots[6]', (c) => ((c.history.snapshots[1] = 1), (c.history.snapshots[0] = 0), (c.history.snapshots[6] = -5))],
    ['statistics for another number of sensors', 'stats.length', (c) => c.stats.pop()],
    ['statistics kept with another window', 'stats[1]: SensorHealthStats.restore: snapshot.windowN', (c) => (c.stats[1].windowN = 10)],
    ['a negative counter', 'counters.refilters', (c) => (c.counters.refilters = -1)],
    ['a missing counter', 'counters.inflations', (c) => delete c.counters.inflations],
  ];

  it.each(corruptions)('rejects %s, naming %s', (_what, field, edit) => {
    const est = estimator();
    const result = restoreTrack(est, edited(trackToCheckpoint(fed(est)), edit));
    expect(result.ok).toBe(false);
    expect(result.ok ? '' : result.reason).toContain(field);
  });

  it('returns a verdict instead of throwing for any JSON value', () => {
    const est = estimator();
    fc.assert(
      fc.property(fc.jsonValue(), (value) => {
        expect(restoreTrack(est, value).ok).toBe(false);
      }),
      { numRuns: 300 },
    );
  });
});

/** Makes entry 0 carry its own R with the given upper triangle (m = 2: R00, R01, R11). */
function ownCovariance(c: any, upper: number[]): void {
  c.history.entries[2] = 1;
  upper.forEach((v, k) => (c.history.entries[5 + k] = v));
}
