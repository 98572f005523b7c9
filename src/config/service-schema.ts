/**
 * The daemon's service sections: MQTT broker connection (or the embedded broker), the HTTP and
 * WebSocket server, authentication, checkpoints, logging and the built-in simulator.
 */
import { z } from 'zod';
import { countSchema, portSchema, positiveSchema, unionError } from './common-schema.js';

const durationMsSchema = z.number().int().min(1);

/**
 * Connection to an external MQTT broker. Without `url` the daemon starts the embedded broker
 * (which speaks MQTT 3.1.1, so the daemon connects to it with protocol version 4).
 * `clientId` absent: `statecast-<hostname>`, resolved at start-up. `sessionExpiryS` keeps the
 * session (and its queued messages) across reconnects (MQTT 5). `maxInflight` bounds
 * unacknowledged QoS 1 publishes.
 */
export const brokerSchema = z
  .strictObject({
    url: z
      .string()
      .regex(/^(mqtt|mqtts|ws|wss):\/\/[^\s/]+/, { error: 'expected a URL starting with mqtt://, mqtts://, ws:// or wss://' })
      .exactOptional(),
    protocolVersion: z.union([z.literal(5), z.literal(4)], unionError('expected 5 or 4')).default(5),
    clientId: z.string().min(1).exactOptional(),
    username: z.string().exactOptional(),
    password: z.string().exactOptional(),
    tls: z
      .strictObject({
        caFile: z.string().min(1).exactOptional(),
        certFile: z.string().min(1).exactOptional(),
        keyFile: z.string().min(1).exactOptional(),
        verifyCertificate: z.boolean().default(true),
      })
      .superRefine((t, ctx) => {
        if ((t.certFile === undefined) !== (t.keyFile === undefined)) {
          const missing = t.certFile === undefined ? 'certFile' : 'keyFile';
          ctx.addIssue({ code: 'custom', path: [missing], message: 'a client certificate needs both certFile and keyFile' });
        }
      })
      .exactOptional(),
    sessionExpiryS: z.number().int().min(0).max(4294967295).default(86400),
    keepaliveS: z.number().int().min(0).max(65535).default(30),
    connectTimeoutMs: durationMsSchema.default(10000),
    reconnectMinMs: durationMsSchema.default(500),
    reconnectMaxMs: durationMsSchema.default(30000),
    statusTopic: z.string().min(1).default('statecast/status'),
    maxInflight: z.number().int().min(1).max(65535).default(256),
  })
  .superRefine((b, ctx) => {
    if (typeof b.reconnectMaxMs === 'number' && typeof b.reconnectMinMs === 'number' && b.reconnectMaxMs < b.reconnectMinMs) {
      ctx.addIssue({ code: 'custom', path: ['reconnectMaxMs'], message: `expected at least reconnectMinMs (${b.reconnectMinMs})` });
    }
    if (b.tls !== undefined && typeof b.url === 'string' && !/^(mqtts|wss):/.test(b.url)) {
      ctx.addIssue({ code: 'custom', path: ['tls'], message: 'tls settings need an mqtts:// or wss:// url' });
    }
    // Run even when other broker fields failed, so every mistake shows at once.
  }, { when: (payload) => typeof payload.value === 'object' && payload.value !== null });

/** The embedded broker started when broker.url is absent. Port 18830 by default, not 1883, to stay clear of a local broker. */
export const embeddedBrokerSchema = z.strictObject({
  host: z.string().min(1).default('127.0.0.1'),
  port: portSchema.default(18830),
});

/**
 * The WebSocket feed on the HTTP server. `allowedOrigins` empty: any origin. A client with more
 * than `maxQueuedPerClient` unsent messages loses the oldest; frames above `maxPayloadBytes`
 * are refused.
 */
export const websocketSchema = z.strictObject({
  path: z.string().regex(/^\//, { error: 'expected a path starting with "/"' }).default('/ws'),
  allowedOrigins: z.array(z.string().min(1)).prefault([]),
  maxQueuedPerClient: countSchema.default(256),
  maxPayloadBytes: countSchema.default(65536),
});

/**
 * The /metrics exposition. `maxEntitiesPerEstimator` bounds the label cardinality of the
 * per-entity series: past it, entities in a non-ok health state are exposed first, then by name,
 * and `statecast_metrics_entities_omitted` counts the rest. 0 exposes no per-entity series.
 */
export const metricsSchema = z.strictObject({
  maxEntitiesPerEstimator: z.number().int().min(0).default(1000),
});

/**
 * The HTTP server (API, dashboard, metrics, WebSocket). Binding to a non-loopback `host` needs
 * `auth.token`, or `allowInsecureBind: true` to accept an open API on the network.
 */
export const httpSchema = z.strictObject({
  host: z.string().min(1).default('127.0.0.1'),
  port: portSchema.default(8470),
  allowInsecureBind: z.boolean().default(false),
  websocket: websocketSchema.prefault({}),
  metrics: metricsSchema.prefault({}),
});

/** Optional bearer token for the reset API and the WebSocket (at least 16 characters). */
export const authSchema = z.strictObject({
  token: z.string().min(16).exactOptional(),
});

/** Periodic snapshots of every track, restored at start-up. `intervalS` between snapshots. */
export const checkpointSchema = z.strictObject({
  directory: z.string().min(1).default('./state'),
  intervalS: positiveSchema.default(30),
  enabled: z.boolean().default(true),
});

/** Log level (pino's levels) and human-readable output instead of JSON lines. */
export const logSchema = z.strictObject({
  level: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  pretty: z.boolean().default(false),
});

/** The demo scenarios the simulator can play. */
export const SIMULATOR_SCENARIOS = ['tank-farm', 'vehicle-yard'] as const;

/**
 * The built-in simulator publishing demo telemetry. `seed` makes runs repeatable; `faults` is a
 * compact fault specification (parsed by the simulator); `speed` multiplies simulated time.
 */
export const simulatorSchema = z.strictObject({
  enabled: z.boolean().default(false),
  scenarios: z.array(z.enum(SIMULATOR_SCENARIOS)).min(1).prefault([...SIMULATOR_SCENARIOS]),
  seed: z.number().int().default(1),
  faults: z.string().exactOptional(),
  speed: positiveSchema.max(1000).default(1),
});

/** True for addresses that only this machine can reach. */
export function isLoopbackHost(host: string): boolean {
  return host === 'localhost' || host === '::1' || host === '[::1]' || /^127(\.\d{1,3}){3}$/.test(host);
}
