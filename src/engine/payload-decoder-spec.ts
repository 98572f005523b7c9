/**
 * Decoder specs: how one sensor's MQTT payload maps onto a measurement of dimension M.
 * Plain objects; the config layer validates them (zod) and hands them to compilePayloadDecoder.
 * Every field a spec names is required in each message: a configured path that is absent is a
 * 'missing-field' rejection, never a silent fallback.
 */

/**
 * How a time stamp is written: epoch seconds ('s'), epoch milliseconds ('ms'), an ISO 8601
 * string ('iso'), or 'auto' (a string is ISO 8601; a number above 1e11 in magnitude is ms,
 * otherwise s).
 */
export type TimeUnit = 'auto' | 's' | 'ms' | 'iso';

/** Every TimeUnit, for schemas and checks. */
export const TIME_UNITS: readonly TimeUnit[] = ['auto', 's', 'ms', 'iso'];

/** Default upper bound on a payload's size in bytes. */
export const DEFAULT_MAX_PAYLOAD_BYTES = 16384;

/** Fields shared by every format. */
interface CommonDecoderSpec {
  /** Payloads larger than this many bytes are rejected unparsed ('too-large'). Default 16384. */
  readonly maxBytes?: number;
}

/**
 * A JSON object or array. Field paths use dots for keys and [i] for array entries:
 * `pos.lat`, `fix[0]`, `[2]`, `gnss.fix[1].lon`. Keys cannot contain '.', '[' or ']'.
 */
export interface JsonDecoderSpec extends CommonDecoderSpec {
  readonly format: 'json';
  /** One field path per measurement component, in order (length M). */
  readonly values: readonly string[];
  /** Path to the time stamp; without it the arrival time is used. */
  readonly time?: string;
  /** How the time stamp is written. Default 'auto'. */
  readonly timeUnit?: TimeUnit;
  /** Path to the accuracy: one number σ (R = σ²·I) or an array of M per-component σ (R = diag σ²). */
  readonly sigma?: string;
  /** Path to R as a flat row-major M×M array or its M(M+1)/2 upper triangle, row by row. */
  readonly covariance?: string;
  /** Path to the sender's sequence number. */
  readonly sequence?: string;
}

/** One bare number as the whole payload (M must be 1); the time is the arrival time. */
export interface NumberDecoderSpec extends CommonDecoderSpec {
  readonly format: 'number';
}

/**
 * One unquoted CSV record (an optional trailing line ending is allowed). Columns are numbered
 * from 0.
 */
export interface CsvDecoderSpec extends CommonDecoderSpec {
  readonly format: 'csv';
  /** One column index per measurement component, in order (length M). */
  readonly values: readonly number[];
  /** Column of the time stamp; without it the arrival time is used. */
  readonly time?: number;
  /** How the time stamp is written. Default 'auto'. */
  readonly timeUnit?: TimeUnit;
  /** Column of one accuracy σ (R = σ²·I). */
  readonly sigma?: number;
  /** Column of the sender's sequence number. */
  readonly sequence?: number;
  /** Field separator. Default ','. */
  readonly separator?: ',' | ';' | '\t';
}

/** Any decoder spec. */
export type PayloadDecoderSpec = JsonDecoderSpec | NumberDecoderSpec | CsvDecoderSpec;

/** Thrown while compiling a spec that cannot work (a configuration error, not bad data). */
export class PayloadDecoderSpecError extends Error {
  override name = 'PayloadDecoderSpecError';
}

/** The checked maxBytes of a spec; throws PayloadDecoderSpecError when it is not a positive integer. */
export function maxBytesOf(spec: CommonDecoderSpec): number {
  const maxBytes = spec.maxBytes ?? DEFAULT_MAX_PAYLOAD_BYTES;
  if (!Number.isSafeInteger(maxBytes) || maxBytes <= 0) {
    throw new PayloadDecoderSpecError(`maxBytes must be a positive integer, got ${maxBytes}`);
  }
  return maxBytes;
}

/** The checked timeUnit of a spec (default 'auto'); throws PayloadDecoderSpecError for an unknown one. */
export function timeUnitOf(spec: { readonly timeUnit?: TimeUnit }): TimeUnit {
  const unit = spec.timeUnit ?? 'auto';
  if (!TIME_UNITS.includes(unit)) {
    throw new PayloadDecoderSpecError(`timeUnit must be one of ${TIME_UNITS.join(', ')}, got ${String(unit)}`);
  }
  return unit;
}
