/**
 * Scale-out mode as the composition root sees it: when the config has a `scaleOut` section,
 * the input comes from the partition stream instead of MQTT subscriptions and the checkpoints
 * are per-partition snapshots in JetStream instead of a file. Estimates still go out through
 * the MQTT connection (to the NATS server's MQTT listener). Absent, nothing changes.
 */
import type { Registry } from 'prom-client';
import type { Config } from '../../config/config-schema.js';
import type { DeepReadonly } from '../../config/deep-freeze.js';
import { Engine, type EstimatePublisher } from '../../engine/engine.js';
import type { EngineEvents } from '../../engine/engine-events.js';
import type { EngineHandle } from '../../engine/engine-handle.js';
import { structuralFingerprint } from '../../daemon/checkpoint-keeper.js';
import { sensorPatternsOf } from './nats-server-config.js';
import type { ScaleOutLogger } from './partition-context.js';
import { registerScaleOutMetrics } from './scale-out-metrics.js';
import { ScaleOutNode } from './scale-out-node.js';

/** What the app holds in scale-out mode. */
export interface ScaleOutMode {
  readonly node: ScaleOutNode;
  /** Connects, claims and starts consuming; registers the metrics. */
  start(): Promise<void>;
  /** Final snapshots and release. Idempotent. */
  stop(): Promise<void>;
  ready(): boolean;
}

/** What it is built from. */
export interface ScaleOutModeOptions {
  readonly config: DeepReadonly<Config>;
  /** The configuration in force now (a reload may have replaced `config`'s estimators). */
  readonly current: () => DeepReadonly<Config>;
  readonly handle: EngineHandle;
  readonly publisher: EstimatePublisher;
  readonly events: EngineEvents;
  readonly registry: Registry;
  readonly logger: ScaleOutLogger;
  readonly now: () => number;
}

/**
 * Scale-out mode for the config, or null in single-node mode. The partition routing is fixed
 * at start: a reload that changes sensor topics or the scaleOut section needs a restart.
 */
export function createScaleOutMode(o: ScaleOutModeOptions): ScaleOutMode | null {
  const scaleOut = o.config.scaleOut;
  if (scaleOut === undefined) return null;
  const node = new ScaleOutNode({
    config: scaleOut,
    handle: o.handle,
    // The engine in charge may come from a reload: build its successor from the same estimators.
    makeEngine: () => new Engine(o.current().estimators, o.publisher, o.events),
    sensorPatterns: sensorPatternsOf(o.config.estimators),
    fingerprint: structuralFingerprint(o.config),
    logger: o.logger,
    now: o.now,
  });
  let registered = false;
  return {
    node,
    async start() {
      if (o.config.broker.url === undefined) {
        o.logger.warn({}, 'scale-out mode without broker.url: estimates go to the embedded broker; point broker.url at the NATS MQTT listener (protocolVersion 4)');
      }
      if (!registered) registerScaleOutMetrics(o.registry, node);
      registered = true;
      await node.start();
    },
    stop: () => node.stop(),
    ready: () => node.ready(),
  };
}
