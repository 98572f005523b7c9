/**
 * The checkpoint form of SensorHealthStats: a plain JSON-able object (NaN written as null), and
 * the check that a snapshot read back from storage fits the sensor it is restored into. A
 * checkpoint that does not fit is a configuration problem (the sensor's dimension or window
 * changed), so the check throws ModelConfigError naming the field and both values.
 */
import { ModelConfigError } from './model-config-error.js';
import { REJECTION_REASONS, type RejectionReason } from './rejection-reason.js';

/** Snapshot of one sensor's health statistics; windows are listed oldest first. */
export interface SensorHealthSnapshot {
  /** Format version; restore accepts only 1. */
  readonly version: 1;
  /** Measurement dimension m the statistics were kept for. */
  readonly measurementDim: number;
  /** Window length N the statistics were kept with. */
  readonly windowN: number;
  /** The NIS values in the window, oldest first (at most windowN). */
  readonly nisWindow: readonly number[];
  /** The gate decisions in the window, oldest first: 1 = rejected by the gate, 0 = passed. */
  readonly gateWindow: readonly (0 | 1)[];
  /** Rejections so far, by reason. */
  readonly rejections: Readonly<Record<RejectionReason, number>>;
  /** Accepted measurements so far. */
  readonly accepted: number;
  /** Accepted measurements that arrived out of order. */
  readonly late: number;
  /** Recoveries (track restarts after refused numerics). */
  readonly recovered: number;
  /** Gate rejections since the last accepted measurement or recovery. */
  readonly consecutiveGateRejections: number;
  /** NIS of the last accepted measurement (null: none yet). */
  readonly lastNis: number | null;
  /** Time of the last accepted measurement, s (null: none yet). */
  readonly lastTimeS: number | null;
  /** NIS of the last rejected measurement, when known. */
  readonly lastRejectedNis: number | null;
  /** Time of the last rejection, s. */
  readonly lastRejectionTimeS: number | null;
  /** Reason of the last rejection. */
  readonly lastRejectionReason: RejectionReason | null;
  /** ν_i/√S_ii of the last accepted measurement, m entries. */
  readonly innovationRatio: readonly (number | null)[];
}

/** NaN (not representable in JSON) as null, every other number as itself. */
export function numberToJson(v: number): number | null {
  return Number.isNaN(v) ? null : v;
}

/** null back to NaN. */
export function numberFromJson(v: number | null): number {
  return v === null ? Number.NaN : v;
}

function fail(field: string, expected: string, actual: unknown): never {
  const shown = typeof actual === 'number' || typeof actual === 'string' ? String(actual) : typeof actual;
  const path = field === '' ? 'snapshot' : `snapshot.${field}`;
  throw new ModelConfigError(path, `SensorHealthStats.restore: ${path} must be ${expected}, got ${shown}`);
}

function count(obj: Record<string, unknown>, key: string, field: string = key): void {
  const v = obj[key];
  if (typeof v !== 'number' || !Number.isInteger(v) || v < 0) fail(field, 'an integer ≥ 0', v);
}

function nullableNumber(v: unknown, field: string): void {
  if (v !== null && typeof v !== 'number') fail(field, 'a number or null', v);
}

function boundedArray(obj: Record<string, unknown>, field: string, maxLength: number): unknown[] {
  const v = obj[field];
  if (!Array.isArray(v)) fail(field, 'an array', v);
  if (v.length > maxLength) fail(`${field}.length`, `at most ${maxLength} (windowN)`, v.length);
  return v;
}

/**
 * Checks that `snapshot` is a version-1 SensorHealthSnapshot whose measurementDim and windowN
 * equal the given ones and whose arrays fit them; throws ModelConfigError naming the first
 * field that does not, with the expected and the actual value.
 */
export function checkHealthSnapshot(snapshot: unknown, measurementDim: number, windowN: number): SensorHealthSnapshot {
  if (typeof snapshot !== 'object' || snapshot === null) fail('', 'an object', snapshot);
  const s = snapshot as Record<string, unknown>;
  if (s['version'] !== 1) fail('version', '1', s['version']);
  if (s['measurementDim'] !== measurementDim) fail('measurementDim', `${measurementDim} (from the options)`, s['measurementDim']);
  if (s['windowN'] !== windowN) fail('windowN', `${windowN} (from the options)`, s['windowN']);
  boundedArray(s, 'nisWindow', windowN).forEach((v, i) => {
    if (typeof v !== 'number' || !Number.isFinite(v) || v < 0) fail(`nisWindow[${i}]`, 'a finite number ≥ 0', v);
  });
  boundedArray(s, 'gateWindow', windowN).forEach((v, i) => {
    if (v !== 0 && v !== 1) fail(`gateWindow[${i}]`, '0 or 1', v);
  });
  const ratio = boundedArray(s, 'innovationRatio', measurementDim);
  if (ratio.length !== measurementDim) fail('innovationRatio.length', `${measurementDim} (measurementDim)`, ratio.length);
  ratio.forEach((v, i) => nullableNumber(v, `innovationRatio[${i}]`));
  const rejections = s['rejections'];
  if (typeof rejections !== 'object' || rejections === null) fail('rejections', 'an object', rejections);
  for (const reason of REJECTION_REASONS) count(rejections as Record<string, unknown>, reason, `rejections.${reason}`);
  for (const field of ['accepted', 'late', 'recovered', 'consecutiveGateRejections']) count(s, field);
  for (const field of ['lastNis', 'lastTimeS', 'lastRejectedNis', 'lastRejectionTimeS']) nullableNumber(s[field], field);
  const reason = s['lastRejectionReason'];
  if (reason !== null && !(REJECTION_REASONS as readonly unknown[]).includes(reason)) {
    fail('lastRejectionReason', `null or one of ${REJECTION_REASONS.join(', ')}`, reason);
  }
  return s as unknown as SensorHealthSnapshot;
}
