/**
 * Why a payload was not turned into a measurement. A closed set, so each reason can be a bounded
 * metric label (`measurement:rejected{reason}`).
 *
 * | reason | meaning |
 * | --- | --- |
 * | too-large | more bytes than the decoder's maxBytes (checked before any parsing) |
 * | not-utf8 | the bytes are not valid UTF-8 |
 * | not-json | the text is not JSON (format 'json') |
 * | not-number | the text is not one bare number (format 'number') |
 * | missing-field | a configured field path or CSV column is absent |
 * | wrong-type | a field holds the wrong JSON type (e.g. the string "1.5" where a number belongs) |
 * | wrong-length | an array has the wrong number of entries, or a CSV payload holds more than one record |
 * | non-finite | a measurement value overflows to ±Infinity (e.g. 1e999) |
 * | bad-time | a time stamp does not parse, or lies outside 2000-01-01 .. 2100-01-01 UTC |
 * | bad-covariance | a sigma or covariance that is non-finite, not positive on the diagonal, or not symmetric |
 * | bad-sequence | a sequence number that is not a non-negative safe integer |
 */
export const DECODE_REJECTIONS = [
  'too-large',
  'not-utf8',
  'not-json',
  'not-number',
  'missing-field',
  'wrong-type',
  'wrong-length',
  'non-finite',
  'bad-time',
  'bad-covariance',
  'bad-sequence',
] as const;

/** One reason from DECODE_REJECTIONS. */
export type DecodeRejection = (typeof DECODE_REJECTIONS)[number];
