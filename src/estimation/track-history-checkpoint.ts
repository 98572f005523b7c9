/**
 * The checkpoint form of a TrackHistory, and its validated restore. Only the live part of the
 * buffers is written: the first count entries and the ceil(count / snapshotEvery) snapshots a
 * re-filter can read (a slot at or past count·stride is always rewritten before it is read).
 */
import { encodeCheckpointNumber, encodeCheckpointNumbers, type CheckpointNumber } from './checkpoint-number.js';
import { integerAt, invalid, numberAt, numbersAt, objectAt } from './checkpoint-reader.js';
import { choleskyInto, isPositiveSemidefinite } from './linalg/cholesky.js';
import type { TrackHistory } from './track-history.js';

/** A track's history as a checkpoint stores it; the layouts are those of TrackHistory. */
export interface TrackHistoryCheckpoint {
  /** Entries held. */
  readonly count: number;
  /** Entries dropped since the track began. */
  readonly evicted: number;
  /** Time before which the record is gone, s (often "-Infinity"). */
  readonly baseTimeS: CheckpointNumber;
  /** The first count·entryStride values of TrackHistory.entries. */
  readonly entries: readonly CheckpointNumber[];
  /** The first ceil(count / snapshotEvery)·snapshotStride values of TrackHistory.snapshots. */
  readonly snapshots: readonly CheckpointNumber[];
  /** Layout of the buffers, checked against the estimator's on restore. */
  readonly entryStride: number;
  readonly snapshotStride: number;
  readonly capacity: number;
  readonly snapshotEvery: number;
}

function usedSnapshots(h: TrackHistory, count: number): number {
  return Math.ceil(count / h.snapshotEvery);
}

/** The live part of a history, JSON-able. */
export function historyToCheckpoint(h: TrackHistory): TrackHistoryCheckpoint {
  return {
    count: h.count,
    evicted: h.evicted,
    baseTimeS: encodeCheckpointNumber(h.baseTimeS),
    entries: encodeCheckpointNumbers(h.entries, h.count * h.entryStride),
    snapshots: encodeCheckpointNumbers(h.snapshots, usedSnapshots(h, h.count) * h.snapshotStride),
    entryStride: h.entryStride,
    snapshotStride: h.snapshotStride,
    capacity: h.capacity,
    snapshotEvery: h.snapshotEvery,
  };
}

/**
 * Checks a stored history against `h` (a fresh history of the target estimator) and fills `h`
 * from it; `sensorDims[k]` is sensor k's measurement dimension. Throws InvalidCheckpoint (see
 * checkpoint-reader.ts) for the first field that does not fit.
 */
export function restoreHistoryInto(value: unknown, h: TrackHistory, sensorDims: readonly number[]): void {
  const o = objectAt(value, 'history');
  for (const key of ['entryStride', 'snapshotStride', 'capacity', 'snapshotEvery'] as const) {
    if (o[key] !== h[key]) invalid(`history.${key}`, `${h[key]} (from the estimator)`, o[key]);
  }
  const count = integerAt(o['count'], 'history.count', 0, h.capacity);
  const evicted = integerAt(o['evicted'], 'history.evicted', 0, Number.MAX_SAFE_INTEGER);
  const baseTimeS = numberAt(o['baseTimeS'], 'history.baseTimeS');
  if (!Number.isFinite(baseTimeS) && baseTimeS !== Number.NEGATIVE_INFINITY) {
    invalid('history.baseTimeS', 'finite or "-Infinity"', o['baseTimeS']);
  }
  const entries = numbersAt(o['entries'], 'history.entries', count * h.entryStride, true);
  // A snapshot's time is NaN while the track was uninitialized, so only its flag, x and P are checked below.
  const snapshots = numbersAt(o['snapshots'], 'history.snapshots', usedSnapshots(h, count) * h.snapshotStride, false);
  h.entries.set(entries);
  h.snapshots.set(snapshots);
  h.count = count;
  h.evicted = evicted;
  h.baseTimeS = baseTimeS;
  checkEntries(h, sensorDims);
  checkSnapshots(h);
}

/**
 * Each entry names a sensor, carries a 0/1 own-covariance flag (then a positive definite R, as
 * ingest demanded), lies after baseTimeS and strictly after its predecessor in the processing
 * order, since insertionIndex's binary search and the duplicate test rely on that order.
 */
function checkEntries(h: TrackHistory, sensorDims: readonly number[]): void {
  const y = new Float64Array(h.maxM);
  const R = new Float64Array(h.maxM * h.maxM);
  const L = new Float64Array(h.maxM * h.maxM);
  for (let i = 0; i < h.count; i++) {
    const base = i * h.entryStride;
    const field = `history.entries[${base}]`;
    const tS = h.timeAt(i);
    if (!(tS > h.baseTimeS)) invalid(field, `a time after history.baseTimeS (${h.baseTimeS}) for entry ${i}`, tS);
    const sensor = h.sensorAt(i);
    const m = sensorDims[sensor];
    if (!Number.isInteger(sensor) || m === undefined) {
      invalid(`history.entries[${base + 1}]`, `a sensor index in 0..${sensorDims.length - 1} for entry ${i}`, sensor);
    }
    const hasR = h.entries[base + 2]!;
    if (hasR !== 0 && hasR !== 1) invalid(`history.entries[${base + 2}]`, `0 or 1 (own covariance flag of entry ${i})`, hasR);
    if (h.readEntry(i, m, y, R) && !choleskyInto(R, m, L)) {
      invalid(`history.entries[${base + 3 + h.maxM}]`, `the start of a positive definite R for entry ${i}`, R[0]);
    }
    if (i > 0) {
      const previous = h.sensorAt(i - 1);
      h.readEntry(i - 1, sensorDims[previous]!, y, R);
      if (h.compareWith(i, h.timeAt(i - 1), previous, y, sensorDims[previous]!) >= 0) {
        invalid(field, `later than entry ${i - 1} in (time, sensor, values) order for entry ${i}`, tS);
      }
    }
  }
}

/** Each snapshot has a 0/1 initialized flag and finite x and P; an initialized one a finite time and a PSD P. */
function checkSnapshots(h: TrackHistory): void {
  const n = h.stateDim;
  const x = new Float64Array(n);
  const P = new Float64Array(n * n);
  const scratch = new Float64Array(n * n);
  for (let j = 0; j < usedSnapshots(h, h.count); j++) {
    const base = j * h.snapshotStride;
    const flag = h.snapshots[base + 1]!;
    if (flag !== 0 && flag !== 1) invalid(`history.snapshots[${base + 1}]`, `0 or 1 (initialized flag of snapshot ${j})`, flag);
    for (let k = base + 2; k < base + h.snapshotStride; k++) {
      if (!Number.isFinite(h.snapshots[k]!)) invalid(`history.snapshots[${k}]`, `finite (x or P of snapshot ${j})`, encodeCheckpointNumber(h.snapshots[k]!));
    }
    if (flag === 0) continue;
    if (!Number.isFinite(h.snapshots[base]!)) {
      invalid(`history.snapshots[${base}]`, `a finite time (snapshot ${j} is initialized)`, encodeCheckpointNumber(h.snapshots[base]!));
    }
    h.readSnapshot(j, x, P);
    if (!isPositiveSemidefinite(P, n, scratch)) {
      invalid(`history.snapshots[${base + 2 + n}]`, `the start of a positive semi-definite P for snapshot ${j}`, P[0]);
    }
  }
}
