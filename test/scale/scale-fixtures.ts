/**
 * Shared pieces of the scale-out tests: the test configuration (the yard estimator, scaled
 * vehicle names tug-00001…), yard traffic published over MQTT into nats-server, in-process
 * replicas, a single-process reference run over the same stream, and condition waits.
 */
import { jetstreamManager, DeliverPolicy, type JetStreamManager } from '@nats-io/jetstream';
import { connect } from '@nats-io/transport-node';
import mqtt from 'mqtt';
import pino from 'pino';
import type { Config } from '../../src/config/config-schema.js';
import type { DeepReadonly } from '../../src/config/deep-freeze.js';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { parseConfig } from '../../src/config/load-config.js';
import type { ScaleOutConfig } from '../../src/config/scale-out-schema.js';
import { structuralFingerprint } from '../../src/daemon/checkpoint-keeper.js';
import { Engine, type EstimatePublisher } from '../../src/engine/engine.js';
import { EngineEvents } from '../../src/engine/engine-events.js';
import { EngineHandle } from '../../src/engine/engine-handle.js';
import { natsMappingsBlock, sensorPatternsOf } from '../../src/adapters/nats/nats-server-config.js';
import { ScaleOutNode } from '../../src/adapters/nats/scale-out-node.js';
import { PartitionRouter } from '../../src/adapters/nats/subject-routes.js';
import { provisionJetStream } from '../../src/adapters/nats/jetstream-provisioning.js';

export type NatsConnection = Awaited<ReturnType<typeof connect>>;

/** Partitions in every test (the issue's example mapping: partition(64, 1)). */
export const PARTITIONS = 64;

/** A scaled yard vehicle name: tug-00001, tug-00002, … */
export function tugName(i: number): string {
  return `tug-${String(i).padStart(5, '0')}`;
}

/** The test configuration: the yard estimator in scale-out mode against `url`. */
export function scaleConfig(url: string, scaleOut: Partial<Record<keyof ScaleOutConfig, unknown>> = {}): DeepReadonly<Config> {
  const result = parseConfig({
    estimators: [yardEstimatorInput()],
    scaleOut: { servers: [url], partitions: PARTITIONS, ordinal: 0, replicas: 1, readyPendingBelow: 1, leaseMs: 3000, renewMs: 300, snapshotIntervalS: 0.5, ...scaleOut },
  }, {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.config;
}

/** The nats-server mappings block for the test configuration. */
export function testMappings(extraPatterns: readonly string[] = []): string {
  return natsMappingsBlock([...sensorPatternsOf(scaleConfig('nats://127.0.0.1:1').estimators), ...extraPatterns], PARTITIONS, 'p');
}

/** One device message. */
export interface DeviceMessage {
  readonly topic: string;
  readonly payload: string;
}

/**
 * Yard traffic: per round, a GNSS fix and a wheel-speed reading from each vehicle, stamped
 * 0.1 s apart per round from `t0S` (in the past, so nothing is refused as from the future).
 */
export function* yardTraffic(entities: number, rounds: number, firstRound = 0, t0S = Math.floor(Date.now() / 1000) - 600): Generator<DeviceMessage> {
  for (let k = firstRound; k < firstRound + rounds; k++) {
    const t = t0S + k * 0.1;
    for (let i = 1; i <= entities; i++) {
      const lat = 51.95 + 1e-6 * k * (1 + (i % 5));
      const lon = 4.05 + 1e-6 * k * (1 + (i % 3));
      yield { topic: `yard/${tugName(i)}/gnss`, payload: JSON.stringify({ t, lat, lon, hacc: 2, seq: k }) };
      yield { topic: `yard/${tugName(i)}/wheel`, payload: JSON.stringify({ t, speed_mps: 0.5 + (i % 4) * 0.1, seq: k }) };
    }
  }
}

/** A device-side MQTT publisher (QoS 1, at most `window` unacknowledged). */
export interface DevicePublisher {
  publish(messages: Iterable<DeviceMessage>): Promise<number>;
  close(): Promise<void>;
}

/** Connects a publisher to nats-server's MQTT listener. */
export async function devicePublisher(mqttUrl: string, clientId = 'yard-devices', window = 64): Promise<DevicePublisher> {
  const client = await mqtt.connectAsync(mqttUrl, { protocolVersion: 4, clientId, reconnectPeriod: 0 });
  return {
    async publish(messages) {
      const inFlight = new Set<Promise<unknown>>();
      let count = 0;
      for (const m of messages) {
        const p: Promise<unknown> = client.publishAsync(m.topic, m.payload, { qos: 1 }).finally(() => inFlight.delete(p));
        inFlight.add(p);
        count += 1;
        if (inFlight.size >= window) await Promise.race(inFlight);
      }
      await Promise.all(inFlight);
      return count;
    },
    close: () => client.endAsync(),
  };
}

/** Polls `condition` every 10 ms until it holds; throws `what` after timeoutMs. */
export async function until(condition: () => boolean | Promise<boolean>, what: string, timeoutMs = 20_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await condition())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 10));
  }
}

/** A NATS connection and manager for test-side checks. */
export async function testClient(url: string): Promise<{ nc: NatsConnection; jsm: JetStreamManager }> {
  const nc = await connect({ servers: url, maxReconnectAttempts: -1, reconnectTimeWait: 100 });
  return { nc, jsm: await jetstreamManager(nc) };
}

/** Creates the stream, bucket and store as a replica would (before devices publish). */
export async function provision(jsm: JetStreamManager, config: DeepReadonly<Config>): Promise<void> {
  await provisionJetStream(jsm, config.scaleOut!);
}

/** The stream's last sequence. */
export async function lastSeq(jsm: JetStreamManager, stream = 'statecast-partitions'): Promise<number> {
  return (await jsm.streams.info(stream)).state.last_seq;
}

/** One stored message. */
export interface StoredMessage {
  readonly seq: number;
  readonly subject: string;
  readonly data: Uint8Array;
  readonly arrivalMs: number;
}

/** Reads the stream from seq 1 to `upTo` in order (one ordered consumer over `p.>`). */
export async function readStream(jsm: JetStreamManager, upTo: number, stream = 'statecast-partitions'): Promise<StoredMessage[]> {
  const out: StoredMessage[] = [];
  if (upTo === 0) return out;
  const consumer = await jsm.jetstream().consumers.get(stream, { filter_subjects: 'p.>', deliver_policy: DeliverPolicy.StartSequence, opt_start_seq: 1 });
  const messages = await consumer.consume({ max_messages: 512 });
  for await (const m of messages) {
    out.push({ seq: m.seq, subject: m.subject, data: m.data, arrivalMs: Math.floor(m.info.timestampNanos / 1e6) });
    if (m.seq >= upTo) break;
  }
  await messages.close();
  return out;
}

/** The single-process reference: one engine fed the whole stream in order, as a replica feeds it. */
export function referenceEngine(config: DeepReadonly<Config>, stored: readonly StoredMessage[]): Engine {
  const engine = new Engine(config.estimators, { publish() {} });
  const router = new PartitionRouter(sensorPatternsOf(config.estimators), PARTITIONS, 'p');
  for (const m of stored) {
    const routed = router.route(m.subject);
    if (routed !== null) engine.handleMessage(routed.topic, m.data, m.arrivalMs);
  }
  return engine;
}

/** x̂ and P of every yard track, by entity. */
export function trackStates(engine: Engine): Map<string, { x: number[]; P: number[] }> {
  const out = new Map<string, { x: number[]; P: number[] }>();
  for (const [entity, track] of engine.tracks().get('yard') ?? new Map()) out.set(entity, { x: Array.from(track.x), P: Array.from(track.P) });
  return out;
}

/** An in-process replica and what it did. */
export interface TestReplica {
  readonly node: ScaleOutNode;
  readonly handle: EngineHandle;
  /** Entities with at least one estimate published. */
  readonly estimated: Set<string>;
  /** Accepted measurements in handling order: entity and payload sequence. */
  readonly accepted: { entity: string; sensor: string; sequence: number | null }[];
  /** Stream messages handled: partition and stream sequence. */
  readonly handled: { partition: number; seq: number }[];
}

/** Builds (does not start) an in-process replica of `config`. */
export function buildReplica(config: DeepReadonly<Config>, hostname = 'statecast-test', instance = '1'): TestReplica {
  const estimated = new Set<string>();
  const publisher: EstimatePublisher = { publish: (topic) => void estimated.add(topic.split('/')[2] ?? topic) };
  const events = new EngineEvents();
  const makeEngine = (): Engine => new Engine(config.estimators, publisher, events);
  const handle = new EngineHandle(makeEngine());
  const accepted: TestReplica['accepted'] = [];
  events.on('measurement:accepted', (e) => void accepted.push({ entity: e.entity, sensor: e.sensor, sequence: e.sequence }));
  const node = new ScaleOutNode({
    config: config.scaleOut!,
    handle,
    makeEngine,
    sensorPatterns: sensorPatternsOf(config.estimators),
    fingerprint: structuralFingerprint(config),
    logger: pino({ level: process.env['SCALE_TEST_LOG'] ?? 'silent' }),
    hostname,
    instance,
  });
  const handled: TestReplica['handled'] = [];
  node.events.on('message', (m) => void handled.push({ partition: m.partition, seq: m.seq }));
  return { node, handle, estimated, accepted, handled };
}
