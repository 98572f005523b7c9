/**
 * Field readers for checkpoints read back from storage. A checkpoint is untrusted input (a file
 * edited by hand, written by another version, or cut short), so every field is checked for its
 * type and size before use. The first mismatch throws InvalidCheckpoint naming the field path
 * (e.g. `history.entries[12]`), what was expected and what was found; restoreTrack turns it into
 * an `{ ok: false, reason }` verdict, so nothing outside the checkpoint code sees the exception.
 */
import { decodeCheckpointNumber } from './checkpoint-number.js';

/** A checkpoint field that does not fit; `field` is its path, the message says what and why. */
export class InvalidCheckpoint extends Error {
  /** Path of the offending field, e.g. `history.count` or `x[2]`. */
  readonly field: string;

  /** Creates the error for one field; `message` states the expected and the actual value. */
  constructor(field: string, message: string) {
    super(message);
    this.name = 'InvalidCheckpoint';
    this.field = field;
  }
}

/** Describes a found value briefly and boundedly (a hostile file may hold huge strings). */
function shown(actual: unknown): string {
  if (actual === undefined) return 'nothing';
  if (actual === null) return 'null';
  if (typeof actual === 'number' || typeof actual === 'boolean') return String(actual);
  if (typeof actual === 'string') return JSON.stringify(actual.length > 40 ? `${actual.slice(0, 40)}…` : actual);
  if (Array.isArray(actual)) return `an array of ${actual.length}`;
  return `a ${typeof actual}`;
}

/** Throws InvalidCheckpoint: `${field} must be ${expected}, got ${actual}`. */
export function invalid(field: string, expected: string, actual: unknown): never {
  throw new InvalidCheckpoint(field, `${field} must be ${expected}, got ${shown(actual)}`);
}

/** The value as a plain object (not null, not an array). */
export function objectAt(value: unknown, field: string): Record<string, unknown> {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) invalid(field, 'an object', value);
  return value as Record<string, unknown>;
}

/** An integer in [min, max]. */
export function integerAt(value: unknown, field: string, min: number, max: number): number {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < min || value > max) {
    invalid(field, max === Number.MAX_SAFE_INTEGER ? `an integer ≥ ${min}` : `an integer in ${min}..${max}`, value);
  }
  return value;
}

/** One stored number (a JSON number or a special string), decoded. */
export function numberAt(value: unknown, field: string): number {
  const v = decodeCheckpointNumber(value);
  if (v === undefined) invalid(field, 'a number or one of "NaN", "Infinity", "-Infinity", "-0"', value);
  return v;
}

/**
 * An array of exactly `length` stored numbers, decoded into a new Float64Array; with `finite`
 * every value must also be finite.
 */
export function numbersAt(value: unknown, field: string, length: number, finite: boolean): Float64Array {
  if (!Array.isArray(value)) invalid(field, `an array of ${length} numbers`, value);
  if (value.length !== length) invalid(`${field}.length`, String(length), value.length);
  const out = new Float64Array(length);
  for (let i = 0; i < length; i++) {
    const v = numberAt(value[i], `${field}[${i}]`);
    if (finite && !Number.isFinite(v)) invalid(`${field}[${i}]`, 'finite', value[i]);
    out[i] = v;
  }
  return out;
}
