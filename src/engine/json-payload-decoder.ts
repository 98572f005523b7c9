import type { DecodeRejection } from './decode-rejection.js';
import type { DecodedMeasurement } from './decoded-measurement.js';
import { reject } from './decoded-measurement.js';
import type { JsonDecoderSpec, TimeUnit } from './payload-decoder-spec.js';
import { PayloadDecoderSpecError, maxBytesOf, timeUnitOf } from './payload-decoder-spec.js';
import type { PayloadDecoder } from './payload-decoder.js';
import type { JsonFieldPath } from './json-field-path.js';
import { FIELD_MISSING, compileJsonFieldPath, lookupJsonField } from './json-field-path.js';
import { readCovarianceInto, readSigmaInto } from './measurement-noise-reader.js';
import { epochNumberToSeconds, parseIsoTimeStampS } from './time-stamp-parser.js';
import { payloadTextOrReject } from './payload-text.js';
import { resetDecodedMeasurement } from './decoded-measurement.js';
import { FlatJsonScanner } from './flat-json-scanner.js';

/** Stands for "JSON.parse threw"; no JSON text parses to a fresh symbol. */
const NOT_JSON: unique symbol = Symbol('not-json');

/**
 * Compiles the 'json' format: field paths into the parsed payload, resolved once here. With
 * byteScan (the default) flat payloads take the byte scanner first; false keeps only the
 * general path (for side-by-side checks and benchmarks: both give the same verdicts).
 */
export function compileJsonPayloadDecoder(spec: JsonDecoderSpec, dim: number, byteScan = true): PayloadDecoder {
  if (spec.values.length !== dim) {
    throw new PayloadDecoderSpecError(`json spec lists ${spec.values.length} values, but M is ${dim}`);
  }
  if (spec.sigma !== undefined && spec.covariance !== undefined) {
    throw new PayloadDecoderSpecError('json spec names both sigma and covariance; choose one');
  }
  const maxBytes = maxBytesOf(spec);
  const valuePaths = spec.values.map(compileJsonFieldPath);
  const timePath = optionalPath(spec.time);
  const timeUnit = timeUnitOf(spec);
  const sigmaPath = optionalPath(spec.sigma);
  const covariancePath = optionalPath(spec.covariance);
  const sequencePath = optionalPath(spec.sequence);
  // ISO time stamps are strings, which the byte scanner leaves to the general path: skip it.
  const fast = !byteScan || covariancePath !== null || timeUnit === 'iso' ? null : flatScanner([...valuePaths, timePath, sigmaPath, sequencePath]);

  /** The fast path's numbers through the same readers; false leaves the verdict to the general path. */
  function decodeScanned(scanner: FlatJsonScanner, arrivalTimeS: number, out: DecodedMeasurement): boolean {
    resetDecodedMeasurement(out, arrivalTimeS);
    const v = scanner.values;
    for (let i = 0; i < dim; i++) {
      if (!Number.isFinite(v[i]!)) return false;
      out.values[i] = v[i]!;
    }
    let k = dim;
    if (timePath !== null && readTime(v[k++]!, timeUnit, out) !== null) return false;
    if (sigmaPath !== null) {
      if (readSigmaInto(v[k++]!, dim, out.covariance) !== null) return false;
      out.hasCovariance = true;
    }
    return sequencePath === null || readSequence(v[k]!, out) === null;
  }

  function decode(payload: Uint8Array, arrivalTimeS: number, out: DecodedMeasurement): boolean {
    if (fast !== null && payload.byteLength <= maxBytes && fast.scan(payload) && decodeScanned(fast, arrivalTimeS, out)) return true;
    const text = payloadTextOrReject(payload, maxBytes, arrivalTimeS, out);
    if (text === null) return false;
    const root = parseJson(text);
    if (root === NOT_JSON) return reject(out, 'not-json');
    for (let i = 0; i < dim; i++) {
      const value = lookupJsonField(root, valuePaths[i]!);
      if (typeof value !== 'number') return reject(out, absentOrWrongType(value));
      if (!Number.isFinite(value)) return reject(out, 'non-finite');
      out.values[i] = value;
    }
    if (timePath !== null) {
      const reason = readTime(lookupJsonField(root, timePath), timeUnit, out);
      if (reason !== null) return reject(out, reason);
    }
    if (sigmaPath !== null || covariancePath !== null) {
      const field = lookupJsonField(root, (sigmaPath ?? covariancePath)!);
      if (field === FIELD_MISSING) return reject(out, 'missing-field');
      const reason = sigmaPath !== null
        ? readSigmaInto(field, dim, out.covariance)
        : readCovarianceInto(field, dim, out.covariance);
      if (reason !== null) return reject(out, reason);
      out.hasCovariance = true;
    }
    if (sequencePath !== null) {
      const reason = readSequence(lookupJsonField(root, sequencePath), out);
      if (reason !== null) return reject(out, reason);
    }
    return true;
  }

  return { format: 'json', dim, maxBytes, decode };
}

/**
 * The byte scanner when every path is a distinct single top-level key (see flat-json-scanner.ts),
 * keys in the order values, time, sigma, sequence; null otherwise.
 */
function flatScanner(paths: readonly (JsonFieldPath | null)[]): FlatJsonScanner | null {
  const keys: string[] = [];
  for (const p of paths) {
    if (p === null) continue;
    const only = p.segments[0];
    if (p.segments.length !== 1 || typeof only !== 'string' || keys.includes(only)) return null;
    keys.push(only);
  }
  return FlatJsonScanner.forKeys(keys);
}

function optionalPath(path: string | undefined): JsonFieldPath | null {
  return path === undefined ? null : compileJsonFieldPath(path);
}

/** JSON.parse behind a catch, so malformed text (or text nested past the engine's limit) is a value. */
function parseJson(text: string): unknown {
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return NOT_JSON;
  }
}

function absentOrWrongType(value: unknown): DecodeRejection {
  return value === FIELD_MISSING ? 'missing-field' : 'wrong-type';
}

/** Epoch numbers under 's', 'ms' or 'auto'; strings under 'iso' or 'auto'. */
function readTime(value: unknown, unit: TimeUnit, out: DecodedMeasurement): DecodeRejection | null {
  let timeS: number;
  if (typeof value === 'number') {
    if (unit === 'iso') return 'wrong-type';
    timeS = epochNumberToSeconds(value, unit);
  } else if (typeof value === 'string') {
    if (unit === 's' || unit === 'ms') return 'wrong-type';
    timeS = parseIsoTimeStampS(value);
  } else {
    return absentOrWrongType(value);
  }
  if (Number.isNaN(timeS)) return 'bad-time';
  out.timeS = timeS;
  out.timeFromPayload = true;
  return null;
}

function readSequence(value: unknown, out: DecodedMeasurement): DecodeRejection | null {
  if (typeof value !== 'number') return absentOrWrongType(value);
  if (!Number.isSafeInteger(value) || value < 0) return 'bad-sequence';
  // value + 0 turns -0 into 0, so a sequence compares and prints as the sender meant.
  out.sequence = value + 0;
  out.hasSequence = true;
  return null;
}
