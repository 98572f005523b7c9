/**
 * How a sensor's payload is decoded, chosen by `format`. Every field a decoder names must be
 * present in each message; the decoder rejects a message that lacks one.
 */
import { z } from 'zod';
import type { DeepReadonly } from './deep-freeze.js';

/**
 * A JSON field path: keys joined by dots and array indices in brackets, e.g. `pos.lat`,
 * `fix[0]`, `[2]`, `gnss.fix[1].lon`.
 */
export const fieldPathSchema = z
  .string()
  .regex(/^(?:[^.[\]]+|\[(?:0|[1-9][0-9]{0,8})\])(?:\.[^.[\]]+|\[(?:0|[1-9][0-9]{0,8})\])*$/, {
    error: 'expected a field path such as "level_m", "pos.lat" or "fix[0]"',
  });

/** How a time stamp is written: epoch s, epoch ms, ISO 8601 text, or 'auto' (text is ISO 8601; a number above 1e11 is ms, else s). */
export const timeUnitSchema = z.enum(['auto', 's', 'ms', 'iso']).default('auto');

/** Payloads larger than this many bytes are rejected unparsed. Default 16384. */
const maxBytesSchema = z.number().int().min(1).default(16384);

const columnSchema = z.number().int().min(0);

/**
 * A JSON object or array. `values`: one field path per measurement component; `time`: path to the
 * time stamp (arrival time when absent); `sigma`: path to one σ or a list of per-component σ;
 * `covariance`: path to the full R (row-major, or its upper triangle); `sequence`: path to the
 * sender's sequence number.
 */
export const jsonDecodeSchema = z
  .strictObject({
    format: z.literal('json'),
    values: z.array(fieldPathSchema).min(1),
    time: fieldPathSchema.exactOptional(),
    timeUnit: timeUnitSchema,
    sigma: fieldPathSchema.exactOptional(),
    covariance: fieldPathSchema.exactOptional(),
    sequence: fieldPathSchema.exactOptional(),
    maxBytes: maxBytesSchema,
  })
  .superRefine((d, ctx) => {
    if (d.sigma !== undefined && d.covariance !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['covariance'], message: 'give sigma or covariance, not both' });
    }
  });

/** The whole payload is one bare number (a one-component measurement); the time is the arrival time. */
export const numberDecodeSchema = z.strictObject({
  format: z.literal('number'),
  maxBytes: maxBytesSchema,
});

/** One CSV record; columns are numbered from 0. `sigma`: column of one σ for every component. */
export const csvDecodeSchema = z.strictObject({
  format: z.literal('csv'),
  values: z.array(columnSchema).min(1),
  time: columnSchema.exactOptional(),
  timeUnit: timeUnitSchema,
  sigma: columnSchema.exactOptional(),
  sequence: columnSchema.exactOptional(),
  separator: z.enum([',', ';', '\t']).default(','),
  maxBytes: maxBytesSchema,
});

/** A payload decoder, chosen by `format`. */
export const decodeSchema = z.discriminatedUnion('format', [jsonDecodeSchema, numberDecodeSchema, csvDecodeSchema]);

/** A validated decoder setting. */
export type DecodeConfig = z.output<typeof decodeSchema>;

/** How many measurement components a decoder yields. */
export function decodedDimension(decode: DeepReadonly<DecodeConfig>): number {
  return decode.format === 'number' ? 1 : decode.values.length;
}
