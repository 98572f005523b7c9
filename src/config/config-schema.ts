/**
 * The daemon's configuration schema: the single home of every default and unit. Objects are
 * strict (an unknown key is an error); sections left out take their defaults. Parse it through
 * `parseConfig` / `loadConfig`, which also apply environment overrides, map messages to plain
 * words and freeze the result.
 */
import { z } from 'zod';
import { estimatorSchema } from './estimator-schema.js';
import {
  authSchema,
  brokerSchema,
  checkpointSchema,
  embeddedBrokerSchema,
  httpSchema,
  isLoopbackHost,
  logSchema,
  simulatorSchema,
} from './service-schema.js';
import { scaleOutSchema } from './scale-out-schema.js';

/** Runs a check even when sibling fields have failed, so every mistake is reported at once. */
const always = { when: (payload: { value: unknown }) => typeof payload.value === 'object' && payload.value !== null };

const estimatorListSchema = z.array(estimatorSchema).min(1).superRefine((list, ctx) => {
  const firstIndex = new Map<string, number>();
  list.forEach((e: { name?: unknown }, i) => {
    if (typeof e?.name !== 'string') return;
    const earlier = firstIndex.get(e.name);
    if (earlier === undefined) firstIndex.set(e.name, i);
    else ctx.addIssue({ code: 'custom', path: [i, 'name'], message: `duplicate name "${e.name}" (also estimators[${earlier}])` });
  });
}, always);

/** The whole configuration file. `$schema` may point an editor at the JSON Schema. */
export const configSchema = z
  .strictObject({
    $schema: z.string().exactOptional(),
    broker: brokerSchema.prefault({}),
    embeddedBroker: embeddedBrokerSchema.prefault({}),
    http: httpSchema.prefault({}),
    auth: authSchema.prefault({}),
    checkpoint: checkpointSchema.prefault({}),
    log: logSchema.prefault({}),
    simulator: simulatorSchema.prefault({}),
    scaleOut: scaleOutSchema.exactOptional(),
    estimators: estimatorListSchema,
  })
  .superRefine((c, ctx) => {
    const host: unknown = c.http?.host;
    if (typeof host !== 'string' || isLoopbackHost(host)) return;
    if (c.auth?.token === undefined && c.http?.allowInsecureBind !== true) {
      ctx.addIssue({
        code: 'custom',
        path: ['http', 'host'],
        message: `"${host}" is reachable from the network; set auth.token, or allowInsecureBind: true to accept an open API`,
      });
    }
  }, always);

/** A validated configuration (defaults filled in). Components receive it deep-frozen. */
export type Config = z.output<typeof configSchema>;
/** A configuration as written (defaults optional), e.g. for building one in code. */
export type ConfigInput = z.input<typeof configSchema>;
export type { EstimatorConfig } from './estimator-schema.js';
export type { SensorConfig } from './sensor-schema.js';
export type { ModelConfig, ModelBlockConfig } from './model-schema.js';
export type { MeasurementConfig } from './measurement-schema.js';
export type { DecodeConfig } from './decode-schema.js';

/** Broker connection settings. */
export type BrokerConfig = Config['broker'];
/** Embedded broker settings. */
export type EmbeddedBrokerConfig = Config['embeddedBroker'];
/** HTTP and WebSocket server settings. */
export type HttpConfig = Config['http'];
/** Authentication settings. */
export type AuthConfig = Config['auth'];
/** Checkpoint settings. */
export type CheckpointConfig = Config['checkpoint'];
/** Log settings. */
export type LogConfig = Config['log'];
/** Simulator settings. */
export type SimulatorConfig = Config['simulator'];
