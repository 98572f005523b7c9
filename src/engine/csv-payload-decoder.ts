import type { DecodeRejection } from './decode-rejection.js';
import type { DecodedMeasurement } from './decoded-measurement.js';
import { reject } from './decoded-measurement.js';
import type { CsvDecoderSpec, TimeUnit } from './payload-decoder-spec.js';
import { PayloadDecoderSpecError, maxBytesOf, timeUnitOf } from './payload-decoder-spec.js';
import type { PayloadDecoder } from './payload-decoder.js';
import { fillSigmaInto } from './measurement-noise-reader.js';
import { parseNumberText } from './number-text.js';
import { payloadTextOrReject } from './payload-text.js';
import { epochNumberToSeconds, parseIsoTimeStampS } from './time-stamp-parser.js';

/** Highest column index a CSV spec may name (bounds the per-decoder field table). */
export const MAX_CSV_COLUMN = 1023;

/**
 * Compiles the 'csv' format: one unquoted record per message, fields located by one scan for
 * the separator up to the highest column the spec needs. A CSV payload with a line break other
 * than one trailing line ending holds several records and is rejected ('wrong-length'), because
 * splicing fields across records would mix two measurements.
 */
export function compileCsvPayloadDecoder(spec: CsvDecoderSpec, dim: number): PayloadDecoder {
  if (spec.values.length !== dim) {
    throw new PayloadDecoderSpecError(`csv spec lists ${spec.values.length} values, but M is ${dim}`);
  }
  const maxBytes = maxBytesOf(spec);
  const columns = [...spec.values, spec.time ?? 0, spec.sigma ?? 0, spec.sequence ?? 0];
  for (const column of columns) {
    if (!Number.isSafeInteger(column) || column < 0 || column > MAX_CSV_COLUMN) {
      throw new PayloadDecoderSpecError(`csv column must be an integer in 0..${MAX_CSV_COLUMN}, got ${column}`);
    }
  }
  const valueColumns = Int32Array.from(spec.values);
  const timeColumn = spec.time ?? -1;
  const timeUnit = timeUnitOf(spec);
  const sigmaColumn = spec.sigma ?? -1;
  const sequenceColumn = spec.sequence ?? -1;
  const separatorText = spec.separator ?? ',';
  if (separatorText !== ',' && separatorText !== ';' && separatorText !== '\t') {
    throw new PayloadDecoderSpecError(`csv separator must be ",", ";" or a tab, got ${JSON.stringify(separatorText)}`);
  }
  const separator = separatorText.charCodeAt(0);
  const maxColumn = Math.max(...columns);
  // Reused by every decode of this decoder: decode is synchronous, so calls never interleave.
  const fieldStart = new Int32Array(maxColumn + 1);
  const fieldEnd = new Int32Array(maxColumn + 1);

  /** Locates fields 0..maxColumn of text[0, end); returns how many were found. */
  function scanFields(text: string, end: number): number {
    let column = 0;
    fieldStart[0] = 0;
    for (let i = 0; i < end; i++) {
      if (text.charCodeAt(i) !== separator) continue;
      fieldEnd[column] = i;
      if (column === maxColumn) return maxColumn + 1;
      column += 1;
      fieldStart[column] = i + 1;
    }
    fieldEnd[column] = end;
    return column + 1;
  }

  function field(text: string, column: number): number {
    return parseNumberText(text, fieldStart[column]!, fieldEnd[column]!);
  }

  function decode(payload: Uint8Array, arrivalTimeS: number, out: DecodedMeasurement): boolean {
    const text = payloadTextOrReject(payload, maxBytes, arrivalTimeS, out);
    if (text === null) return false;
    const end = recordEnd(text);
    if (end < 0) return reject(out, 'wrong-length');
    const found = scanFields(text, end);
    for (let i = 0; i < dim; i++) {
      const column = valueColumns[i]!;
      if (column >= found) return reject(out, 'missing-field');
      const value = field(text, column);
      if (Number.isNaN(value)) return reject(out, 'wrong-type');
      if (!Number.isFinite(value)) return reject(out, 'non-finite');
      out.values[i] = value;
    }
    if (timeColumn >= 0) {
      if (timeColumn >= found) return reject(out, 'missing-field');
      const reason = readTime(text, fieldStart[timeColumn]!, fieldEnd[timeColumn]!, timeUnit, out);
      if (reason !== null) return reject(out, reason);
    }
    if (sigmaColumn >= 0) {
      if (sigmaColumn >= found) return reject(out, 'missing-field');
      const sigma = field(text, sigmaColumn);
      if (Number.isNaN(sigma)) return reject(out, 'wrong-type');
      if (!fillSigmaInto(sigma, dim, out.covariance)) return reject(out, 'bad-covariance');
      out.hasCovariance = true;
    }
    if (sequenceColumn >= 0) {
      if (sequenceColumn >= found) return reject(out, 'missing-field');
      const sequence = field(text, sequenceColumn);
      if (Number.isNaN(sequence)) return reject(out, 'wrong-type');
      if (!Number.isSafeInteger(sequence) || sequence < 0) return reject(out, 'bad-sequence');
      out.sequence = sequence + 0;
      out.hasSequence = true;
    }
    return true;
  }

  return { format: 'csv', dim, maxBytes, decode };
}

/** End of the single record (one trailing LF or CRLF dropped), or -1 if another line follows. */
function recordEnd(text: string): number {
  let end = text.length;
  if (end > 0 && text.charCodeAt(end - 1) === 0x0a) end -= 1;
  if (end > 0 && text.charCodeAt(end - 1) === 0x0d) end -= 1;
  const lf = text.indexOf('\n');
  const cr = text.indexOf('\r');
  return (lf >= 0 && lf < end) || (cr >= 0 && cr < end) ? -1 : end;
}

/** A time field: a number under 's'/'ms', ISO 8601 under 'iso', either under 'auto'. */
function readTime(
  text: string,
  start: number,
  end: number,
  unit: TimeUnit,
  out: DecodedMeasurement,
): DecodeRejection | null {
  while (start < end && text.charCodeAt(start) === 0x20) start += 1;
  while (end > start && text.charCodeAt(end - 1) === 0x20) end -= 1;
  let timeS = NaN;
  if (unit !== 'iso') {
    const epoch = parseNumberText(text, start, end);
    if (!Number.isNaN(epoch)) timeS = epochNumberToSeconds(epoch, unit);
    else if (unit !== 'auto') return 'wrong-type';
    else timeS = parseIsoTimeStampS(text, start, end);
  } else {
    timeS = parseIsoTimeStampS(text, start, end);
  }
  if (Number.isNaN(timeS)) return 'bad-time';
  out.timeS = timeS;
  out.timeFromPayload = true;
  return null;
}
