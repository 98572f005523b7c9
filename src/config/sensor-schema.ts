/**
 * One sensor of an estimator: where its messages arrive (a topic pattern whose named wildcards
 * identify the entity), how to decode them, and what they measure.
 */
import { z } from 'zod';
import { positiveSchema, subscribeQosSchema, topicPatternSchema } from './common-schema.js';
import { decodedDimension, decodeSchema } from './decode-schema.js';
import { measurementDimension, measurementSchema } from './measurement-schema.js';

/**
 * A sensor. `topic`: pattern such as `yard/{vehicle}/gnss`; `qos`: subscription QoS (default 1);
 * `expectedPeriodS`: the nominal reporting period (s), used by health checks to notice silence.
 */
export const sensorSchema = z
  .strictObject({
    topic: topicPatternSchema,
    qos: subscribeQosSchema.default(1),
    expectedPeriodS: positiveSchema.exactOptional(),
    decode: decodeSchema,
    measurement: measurementSchema,
  })
  .superRefine((s, ctx) => {
    const { dim, because } = measurementDimension(s.measurement);
    const decoded = decodedDimension(s.decode);
    if (decoded === dim) return;
    if (s.decode.format === 'number') {
      ctx.addIssue({
        code: 'custom',
        path: ['decode', 'format'],
        message: `a bare number gives one value, but the measurement has ${dim} (${because}); use json or csv`,
      });
    } else {
      const what = (s.decode.format === 'json' ? 'field path' : 'column') + (dim === 1 ? '' : 's');
      ctx.addIssue({
        code: 'custom',
        path: ['decode', 'values'],
        message: `expected ${dim} ${what} (the measurement dimension of ${because}), got ${decoded}`,
      });
    }
  });

/** A validated sensor. */
export type SensorConfig = z.output<typeof sensorSchema>;
