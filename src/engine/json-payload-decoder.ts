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

/** Stands for "JSON.parse threw"; no JSON text parses to a fresh symbol. */
const NOT_JSON: unique symbol = Symbol('not-json');

/** Compiles the 'json' format: field paths into the parsed payload, resolved once here. */
export function compileJsonPayloadDecoder(spec: JsonDecoderSpec, dim: number): PayloadDecoder {
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

  function decode(payload: Uint8Array, arrivalTimeS: number, out: DecodedMeasurement): boolean {
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
