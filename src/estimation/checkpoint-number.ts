/**
 * How a checkpoint writes a number. JSON has no literal for NaN or ±Infinity (JSON.stringify
 * turns them into null) and writes −0 as 0, yet a track legitimately holds all of them: tS is
 * NaN before initialization, history.baseTimeS starts at −Infinity, and a restored track must
 * continue bit for bit. So every finite number other than −0 is written as itself and the
 * four special values as the strings below; decoding gives back exactly the same double.
 */

/** A number as a checkpoint stores it: a finite JSON number, or one of the four special strings. */
export type CheckpointNumber = number | 'NaN' | 'Infinity' | '-Infinity' | '-0';

/** Encodes v so that JSON.stringify and JSON.parse keep it exactly (see the file comment). */
export function encodeCheckpointNumber(v: number): CheckpointNumber {
  if (Number.isNaN(v)) return 'NaN';
  if (v === Number.POSITIVE_INFINITY) return 'Infinity';
  if (v === Number.NEGATIVE_INFINITY) return '-Infinity';
  if (v === 0 && 1 / v < 0) return '-0';
  return v;
}

/** Decodes a stored number; undefined when the value is neither a number nor one of the strings. */
export function decodeCheckpointNumber(v: unknown): number | undefined {
  if (typeof v === 'number') return v;
  switch (v) {
    case 'NaN':
      return Number.NaN;
    case 'Infinity':
      return Number.POSITIVE_INFINITY;
    case '-Infinity':
      return Number.NEGATIVE_INFINITY;
    case '-0':
      return -0;
    default:
      return undefined;
  }
}

/** Encodes the first `length` values of a (typed) array. */
export function encodeCheckpointNumbers(values: ArrayLike<number>, length: number = values.length): CheckpointNumber[] {
  const out: CheckpointNumber[] = new Array<CheckpointNumber>(length);
  for (let i = 0; i < length; i++) out[i] = encodeCheckpointNumber(values[i]!);
  return out;
}
