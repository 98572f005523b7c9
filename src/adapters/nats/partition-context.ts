/**
 * What a node's partitions share: configuration, the JetStream pieces, the engine, events, log
 * and counters, and the callbacks by which a partition tells its node about changes.
 */
import type { JetStreamClient } from '@nats-io/jetstream';
import type { DeepReadonly } from '../../config/deep-freeze.js';
import type { ScaleOutConfig } from '../../config/scale-out-schema.js';
import type { EngineHandle } from '../../engine/engine-handle.js';
import type { PartitionOwnership } from './partition-ownership.js';
import type { PartitionSnapshotStore } from './partition-snapshots.js';
import type { ScaleOutEvents } from './scale-out-events.js';
import type { PartitionRouter } from './subject-routes.js';

/** The log calls a partition makes (pino's signature). */
export interface ScaleOutLogger {
  info(obj: object, msg: string): void;
  warn(obj: object, msg: string): void;
  error(obj: object, msg: string): void;
}

/** Counters shared by a node's partitions. */
export interface ScaleOutCounters {
  drift: number;
  unrouted: number;
  snapshots: number;
}

/** What a partition shares with its node. */
export interface PartitionContext {
  readonly config: DeepReadonly<ScaleOutConfig>;
  /** Messages each partition's consumer asks for per pull. */
  readonly batch: number;
  readonly js: JetStreamClient;
  readonly ownership: PartitionOwnership;
  readonly snapshots: PartitionSnapshotStore;
  readonly router: PartitionRouter;
  readonly handle: EngineHandle;
  readonly events: ScaleOutEvents;
  readonly log: ScaleOutLogger;
  readonly now: () => number;
  readonly counters: ScaleOutCounters;
  readonly stopping: () => boolean;
  /** Drops the partition's tracks from the engine (batched by the node). */
  readonly dropTracks: (partition: number) => void;
  /** Something readiness depends on changed. */
  readonly changed: () => void;
}
