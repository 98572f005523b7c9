import type { DecodedMeasurement } from './decoded-measurement.js';
import { reject, resetDecodedMeasurement } from './decoded-measurement.js';

// One fatal decoder for the process: invalid UTF-8 throws instead of becoming U+FFFD, so a
// garbled payload is rejected rather than parsed. Measured faster here than isUtf8 + toString.
const utf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * The common start of every decode: resets the slot (time defaults to the arrival time), checks
 * the size before touching the bytes, and decodes UTF-8. Returns the text, or null with
 * out.reason set to 'too-large' or 'not-utf8'.
 */
export function payloadTextOrReject(
  payload: Uint8Array,
  maxBytes: number,
  arrivalTimeS: number,
  out: DecodedMeasurement,
): string | null {
  resetDecodedMeasurement(out, arrivalTimeS);
  if (payload.byteLength > maxBytes) {
    reject(out, 'too-large');
    return null;
  }
  try {
    return utf8.decode(payload);
  } catch {
    reject(out, 'not-utf8');
    return null;
  }
}
