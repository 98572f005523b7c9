/**
 * A track as plain JSON-able data, and its validated restore, so the daemon can write its tracks
 * to disk and carry on after a restart as though it had never stopped.
 *
 * What is kept: the estimate x̂, P (upper triangle, row by row: P is exactly symmetric, the
 * filters mirror it), its time, the history (live entries and snapshots) so late data inside
 * the horizon is still re-filtered exactly, per-sensor health statistics and the counters.
 * What is not: the fixed-lag smoother's ring. It restarts empty, so smoothedInto reports NaN
 * until L + 1 new steps have arrived; x̂ and P do not depend on it, so filtering continues
 * exactly. Non-finite numbers are encoded as in checkpoint-number.ts.
 */
import { decodeCheckpointNumber, encodeCheckpointNumber, encodeCheckpointNumbers, type CheckpointNumber } from './checkpoint-number.js';
import { integerAt, invalid, InvalidCheckpoint, numbersAt, objectAt } from './checkpoint-reader.js';
import type { Estimator } from './estimator.js';
import { SensorHealthStats, type SensorHealthSnapshot } from './health-stats.js';
import { isPositiveSemidefinite } from './linalg/cholesky.js';
import { ModelConfigError } from './model-config-error.js';
import type { Track, TrackCounters } from './track.js';
import { historyToCheckpoint, restoreHistoryInto, type TrackHistoryCheckpoint } from './track-history-checkpoint.js';

export type { CheckpointNumber } from './checkpoint-number.js';
export type { TrackHistoryCheckpoint } from './track-history-checkpoint.js';

/** One track as a checkpoint stores it (format version 1). */
export interface TrackCheckpoint {
  /** Format version of this object; restoreTrack accepts only 1. */
  readonly version: 1;
  readonly initialized: boolean;
  /** Time of x̂ and P, s; "NaN" exactly when the track is not initialized. */
  readonly tS: CheckpointNumber;
  /** x̂, n values. */
  readonly x: readonly CheckpointNumber[];
  /** Upper triangle of P row by row (P00, P01, …, P0n−1, P11, …), n(n+1)/2 values. */
  readonly P: readonly CheckpointNumber[];
  readonly history: TrackHistoryCheckpoint;
  /** One snapshot per sensor, in the estimator's sensor order. */
  readonly stats: readonly SensorHealthSnapshot[];
  readonly counters: TrackCounters;
}

/** The outcome of restoreTrack: a track ready to ingest, or why the checkpoint does not fit. */
export type TrackRestoreResult =
  | { readonly ok: true; readonly track: Track }
  | { readonly ok: false; readonly reason: string };

/** The track as a plain, JSON-able object (allocates; call it when checkpointing, not per measurement). */
export function trackToCheckpoint(track: Track): TrackCheckpoint {
  const n = track.x.length;
  const P: CheckpointNumber[] = [];
  for (let r = 0; r < n; r++) for (let c = r; c < n; c++) P.push(encodeCheckpointNumber(track.P[r * n + c]!));
  return {
    version: 1,
    initialized: track.initialized,
    tS: encodeCheckpointNumber(track.tS),
    x: encodeCheckpointNumbers(track.x),
    P,
    history: historyToCheckpoint(track.history),
    stats: track.stats.map((s) => s.snapshot()),
    counters: { ...track.counters },
  };
}

/**
 * Rebuilds a track of `estimator` from a checkpoint read back from storage. Everything is
 * checked first: types, lengths against the estimator's state and sensor dimensions and the
 * history's layout, finiteness, P positive semi-definite (the test the filters commit with),
 * the history's order, and each sensor's statistics. Never throws for bad data: a checkpoint
 * that does not fit gives `{ ok: false, reason }` with a reason naming the field, e.g.
 * `history.capacity must be 64 (from the estimator), got 32`. The smoother restarts empty.
 */
export function restoreTrack(estimator: Estimator, checkpoint: unknown): TrackRestoreResult {
  const track = estimator.createTrack();
  try {
    fillTrack(track, checkpoint);
  } catch (e) {
    if (e instanceof InvalidCheckpoint) return { ok: false, reason: e.message };
    throw e;
  }
  return { ok: true, track };
}

function fillTrack(track: Track, checkpoint: unknown): void {
  const c = objectAt(checkpoint, 'checkpoint');
  if (c['version'] !== 1) invalid('version', '1', c['version']);
  const initialized = c['initialized'];
  if (typeof initialized !== 'boolean') invalid('initialized', 'true or false', initialized);
  const tS = decodeCheckpointNumber(c['tS']);
  // Track keeps tS NaN exactly while uninitialized (coastS, isStale and predictInto rely on it).
  if (initialized ? !Number.isFinite(tS) : !Number.isNaN(tS)) {
    invalid('tS', initialized ? 'a finite time (the track is initialized)' : '"NaN" (the track is not initialized)', c['tS']);
  }
  const n = track.x.length;
  const x = numbersAt(c['x'], 'x', n, true);
  const P = covarianceFromUpper(numbersAt(c['P'], 'P', (n * (n + 1)) / 2, true), n);
  restoreHistoryInto(c['history'], track.history, track.settings.sensors.map((s) => s.model.dim));
  restoreStatsInto(c['stats'], track);
  restoreCountersInto(c['counters'], track.counters);
  track.x.set(x);
  track.P.set(P);
  track.tS = tS!;
  track.initialized = initialized;
}

/** The full symmetric P from its upper triangle; must be positive semi-definite. */
function covarianceFromUpper(upper: Float64Array, n: number): Float64Array {
  const P = new Float64Array(n * n);
  let t = 0;
  for (let r = 0; r < n; r++) {
    for (let c = r; c < n; c++) {
      const v = upper[t++]!;
      P[r * n + c] = v;
      P[c * n + r] = v;
    }
  }
  if (!isPositiveSemidefinite(P, n, new Float64Array(n * n))) invalid('P', 'positive semi-definite', 'a matrix that is not');
  return P;
}

/** Statistics through SensorHealthStats.restore, with the options the fresh track was built with. */
function restoreStatsInto(value: unknown, track: Track): void {
  const count = track.stats.length;
  if (!Array.isArray(value)) invalid('stats', `an array of ${count} sensor snapshots`, value);
  if (value.length !== count) invalid('stats.length', `${count} (one per sensor)`, value.length);
  for (let i = 0; i < count; i++) {
    const fresh = track.stats[i]!;
    try {
      track.stats[i] = SensorHealthStats.restore(value[i], {
        measurementDim: fresh.measurementDim,
        windowN: fresh.windowN,
        confidence: fresh.confidence,
      });
    } catch (e) {
      if (e instanceof ModelConfigError) throw new InvalidCheckpoint(`stats[${i}]`, `stats[${i}]: ${e.message}`);
      throw e;
    }
  }
}

function restoreCountersInto(value: unknown, counters: TrackCounters): void {
  const o = objectAt(value, 'counters');
  const keys = Object.keys(counters) as (keyof TrackCounters)[];
  const checked = keys.map((key) => integerAt(o[key], `counters.${key}`, 0, Number.MAX_SAFE_INTEGER));
  keys.forEach((key, i) => (counters[key] = checked[i]!));
}
