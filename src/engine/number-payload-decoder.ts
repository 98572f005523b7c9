import type { DecodedMeasurement } from './decoded-measurement.js';
import { reject } from './decoded-measurement.js';
import type { NumberDecoderSpec } from './payload-decoder-spec.js';
import { PayloadDecoderSpecError, maxBytesOf } from './payload-decoder-spec.js';
import type { PayloadDecoder } from './payload-decoder.js';
import { parseNumberText } from './number-text.js';
import { payloadTextOrReject } from './payload-text.js';

/** Compiles the 'number' format: the whole payload is one JSON-grammar number; time is arrival. */
export function compileNumberPayloadDecoder(spec: NumberDecoderSpec, dim: number): PayloadDecoder {
  if (dim !== 1) {
    throw new PayloadDecoderSpecError(`format 'number' carries one value, but M is ${dim}`);
  }
  const maxBytes = maxBytesOf(spec);
  return {
    format: 'number',
    dim,
    maxBytes,
    decode(payload: Uint8Array, arrivalTimeS: number, out: DecodedMeasurement): boolean {
      const text = payloadTextOrReject(payload, maxBytes, arrivalTimeS, out);
      if (text === null) return false;
      const value = parseNumberText(text, 0, text.length);
      if (Number.isNaN(value)) return reject(out, 'not-number');
      if (!Number.isFinite(value)) return reject(out, 'non-finite');
      out.values[0] = value;
      return true;
    },
  };
}
