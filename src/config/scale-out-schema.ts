/**
 * The optional `scaleOut` section: run as one of N replicas that share the entities through
 * virtual partitions on NATS JetStream instead of subscribing to the broker directly. Absent,
 * the daemon runs single-node as before. Units are in the names; every default lives here.
 */
import { z } from 'zod';
import { countSchema, positiveSchema, unionError } from './common-schema.js';

/** A NATS subject token: no dots, spaces or wildcards. */
const tokenSchema = z.string().regex(/^[A-Za-z0-9_-]+$/, { error: 'expected letters, digits, "_" or "-" (one subject token)' });

/** A stream, bucket or object store name as JetStream accepts it. */
const jetStreamNameSchema = z.string().regex(/^[A-Za-z0-9_-]+$/, { error: 'expected letters, digits, "_" or "-"' });

/**
 * Scale-out mode.
 * - `servers`: NATS URLs (`nats://host:port`), tried in order.
 * - `partitions`: the fixed number of virtual partitions P (the `partition(P, …)` of the broker's
 *   subject mappings; changing it re-hashes every entity, so it is chosen once).
 * - `replicas` N and `ordinal` k: this replica owns the partitions p with p mod N = k. `ordinal:
 *   'hostname'` takes k from a host name ending in `-<k>` (a StatefulSet pod name).
 * - `replicaId`: names this process in ownership records; absent: `<hostname>-<6 random hex>`,
 *   new at every start.
 * - `subjectPrefix`: the first token the mappings prepend (`p` in `p.17.yard.tug-01.gnss`).
 * - `stream`, `ownersBucket`, `snapshotsBucket`: the JetStream stream, KV bucket (owner
 *   records) and object store (per-partition snapshots).
 * - `provision`: create the stream, bucket and store when they are missing (with
 *   `replayWindowS` as the stream's max age); false to use ones made by the operator.
 * - `snapshotIntervalS`: cadence of per-partition snapshots.
 * - `leaseMs`, `renewMs`: an owner renews its claim every renewMs; a claimant whose predecessor
 *   neither released nor acknowledged waits leaseMs before consuming.
 * - `readyPendingBelow`: a partition has caught up when fewer messages than this wait for it.
 */
export const scaleOutSchema = z
  .strictObject({
    servers: z
      .array(z.string().regex(/^(nats|tls):\/\/[^\s/]+$/, { error: 'expected a URL like nats://host:4222' }))
      .min(1)
      .prefault(['nats://127.0.0.1:4222']),
    partitions: z.number().int().min(1).max(4096).default(64),
    replicas: countSchema.default(1),
    ordinal: z.union([z.number().int().min(0), z.literal('hostname')], unionError('expected a whole number ≥ 0 or "hostname"')).default('hostname'),
    replicaId: tokenSchema.exactOptional(),
    subjectPrefix: tokenSchema.default('p'),
    stream: jetStreamNameSchema.default('statecast-partitions'),
    ownersBucket: jetStreamNameSchema.default('statecast-owners'),
    snapshotsBucket: jetStreamNameSchema.default('statecast-snapshots'),
    provision: z.boolean().default(true),
    replayWindowS: positiveSchema.default(86_400),
    snapshotIntervalS: positiveSchema.default(10),
    leaseMs: z.number().int().min(100).default(5000),
    renewMs: z.number().int().min(20).default(1000),
    readyPendingBelow: countSchema.default(100),
  })
  .superRefine((s, ctx) => {
    if (typeof s.ordinal === 'number' && typeof s.replicas === 'number' && s.ordinal >= s.replicas) {
      ctx.addIssue({ code: 'custom', path: ['ordinal'], message: `expected less than replicas (${s.replicas})` });
    }
    if (typeof s.renewMs === 'number' && typeof s.leaseMs === 'number' && s.renewMs * 2 > s.leaseMs) {
      ctx.addIssue({ code: 'custom', path: ['renewMs'], message: `expected at most half of leaseMs (${s.leaseMs})` });
    }
  }, { when: (payload) => typeof payload.value === 'object' && payload.value !== null });

/** The validated scale-out section. */
export type ScaleOutConfig = z.output<typeof scaleOutSchema>;
