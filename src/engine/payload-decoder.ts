import type { DecodedMeasurement } from './decoded-measurement.js';
import type { PayloadDecoderSpec } from './payload-decoder-spec.js';
import { PayloadDecoderSpecError } from './payload-decoder-spec.js';
import { compileJsonPayloadDecoder } from './json-payload-decoder.js';
import { compileCsvPayloadDecoder } from './csv-payload-decoder.js';
import { compileNumberPayloadDecoder } from './number-payload-decoder.js';

export type { PayloadDecoderSpec } from './payload-decoder-spec.js';
export { PayloadDecoderSpecError } from './payload-decoder-spec.js';
export type { DecodeRejection } from './decode-rejection.js';
export { DECODE_REJECTIONS } from './decode-rejection.js';
export type { DecodedMeasurement } from './decoded-measurement.js';
export { createDecodedMeasurement } from './decoded-measurement.js';

/** Largest measurement dimension M a decoder accepts (R is M×M and preallocated per slot). */
export const MAX_MEASUREMENT_DIM = 64;

/**
 * A payload decoder compiled once from its spec. `decode` runs for every message: it checks the
 * size first, allocates only what JSON.parse and UTF-8 decoding need, never reads a clock and
 * never throws.
 */
export interface PayloadDecoder {
  /** The spec's format. */
  readonly format: PayloadDecoderSpec['format'];
  /** Measurement dimension M. */
  readonly dim: number;
  /** Payloads larger than this many bytes are rejected unparsed. */
  readonly maxBytes: number;
  /**
   * Fills `out` (made by createDecodedMeasurement(dim)) from one payload (a Uint8Array or
   * Buffer). arrivalTimeS (epoch seconds) is the time stamp when the spec names no time field.
   * Returns true on success; false with out.reason set on rejection.
   */
  decode(payload: Uint8Array, arrivalTimeS: number, out: DecodedMeasurement): boolean;
}

/**
 * Compiles a validated spec for measurements of dimension `dim` (M). Throws
 * PayloadDecoderSpecError for a spec that cannot work: M out of range, a value count other than
 * M, a malformed field path or column, both sigma and covariance, format 'number' with M ≠ 1.
 */
export function compilePayloadDecoder(spec: PayloadDecoderSpec, dim: number): PayloadDecoder {
  if (!Number.isSafeInteger(dim) || dim < 1 || dim > MAX_MEASUREMENT_DIM) {
    throw new PayloadDecoderSpecError(
      `measurement dimension must be an integer in 1..${MAX_MEASUREMENT_DIM}, got ${dim}`,
    );
  }
  const format = spec.format;
  switch (format) {
    case 'json':
      return compileJsonPayloadDecoder(spec, dim);
    case 'csv':
      return compileCsvPayloadDecoder(spec, dim);
    case 'number':
      return compileNumberPayloadDecoder(spec, dim);
    default: {
      const unknownFormat: never = format;
      throw new PayloadDecoderSpecError(`unknown payload format ${JSON.stringify(unknownFormat)}`);
    }
  }
}
