import type { DecodeRejection } from './decode-rejection.js';

/**
 * A caller-owned, preallocated slot that a payload decoder fills. One slot per subscription is
 * reused for every message, so decoding allocates no output. After a rejected decode only
 * `reason` is meaningful; the other fields may hold partial data.
 */
export interface DecodedMeasurement {
  /** Measurement components z, length M, in the units the sensor reports. */
  readonly values: Float64Array;
  /** Measurement time stamp, seconds since the Unix epoch (UTC). */
  timeS: number;
  /** True when timeS came from the payload; false when it is the arrival time. */
  timeFromPayload: boolean;
  /** True when the payload carried its own accuracy (sigma or covariance). */
  hasCovariance: boolean;
  /** Full, symmetric M×M measurement covariance R (row-major), valid when hasCovariance. */
  readonly covariance: Float64Array;
  /** True when the payload carried a sequence number. */
  hasSequence: boolean;
  /** Sender's sequence number (non-negative safe integer), valid when hasSequence. */
  sequence: number;
  /** Why the last decode failed, or null after a successful one. */
  reason: DecodeRejection | null;
}

/** Allocates a slot for measurements of dimension M (`dim`). */
export function createDecodedMeasurement(dim: number): DecodedMeasurement {
  return {
    values: new Float64Array(dim),
    timeS: 0,
    timeFromPayload: false,
    hasCovariance: false,
    covariance: new Float64Array(dim * dim),
    hasSequence: false,
    sequence: 0,
    reason: null,
  };
}

/** Clears the flags of a slot before a decode and sets the arrival time as the default time. */
export function resetDecodedMeasurement(out: DecodedMeasurement, arrivalTimeS: number): void {
  out.timeS = arrivalTimeS;
  out.timeFromPayload = false;
  out.hasCovariance = false;
  out.hasSequence = false;
  out.sequence = 0;
  out.reason = null;
}

/** Records a rejection in the slot; returns false so a decoder can `return reject(out, ...)`. */
export function reject(out: DecodedMeasurement, reason: DecodeRejection): false {
  out.reason = reason;
  return false;
}
