/**
 * Broker restart with a file store: nats-server is stopped and started again on the same
 * ports and store. Both replicas reconnect, report not ready and then ready again, resume every
 * partition where they stopped (no sequence skipped or handled twice), and their estimates equal
 * a single-process run over the stream.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import {
  buildReplica, devicePublisher, lastSeq, provision, readStream, referenceEngine, scaleConfig, testClient, testMappings, trackStates, until, yardTraffic,
  type NatsConnection, type StoredMessage, type TestReplica,
} from './scale-fixtures.js';

const ENTITIES = 20;

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let replicas: TestReplica[] = [];
const readiness: boolean[][] = [[], []];
let stored: StoredMessage[];
let handledBeforeRestart = 0;

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  replicas = [0, 1].map((ordinal) => buildReplica(scaleConfig(server.url, { replicas: 2, ordinal, replicaId: `restart-${ordinal}` })));
  replicas.forEach((r, i) => r.node.events.on('ready:changed', ({ ready }) => void readiness[i]!.push(ready)));
  await Promise.all(replicas.map((r) => r.node.start()));
  await until(() => replicas.every((r) => r.node.ready()), 'both replicas ready');
  let devices = await devicePublisher(server.mqttUrl, 'yard-devices-1');
  await devices.publish(yardTraffic(ENTITIES, 10, 0));
  await devices.close();
  const before = await lastSeq(jsm);
  await until(() => replicas.reduce((n, r) => n + r.handled.length, 0) >= before, 'the first traffic handled');
  handledBeforeRestart = before;
  await server.restart();
  await until(() => readiness.every((h) => h.includes(false)), 'both replicas to report not ready', 30_000);
  await until(() => readiness.every((h) => h.at(-1) === true && h.lastIndexOf(true) > h.indexOf(false)), 'both replicas ready again', 30_000);
  devices = await devicePublisher(server.mqttUrl, 'yard-devices-2');
  await devices.publish(yardTraffic(ENTITIES, 10, 10));
  await devices.close();
  const end = await lastSeq(jsm);
  await until(() => replicas.reduce((n, r) => n + r.handled.length, 0) >= end, 'the traffic after the restart handled', 30_000);
  stored = await readStream(jsm, end);
}, 90_000);

afterAll(async () => {
  await Promise.all(replicas.map((r) => r.node.stop()));
  await nc?.close();
  await server?.stop();
});

describe('a broker restart', () => {
  it('keeps the stream: the messages from before it are still there', () => {
    expect(handledBeforeRestart).toBe(ENTITIES * 10 * 2);
    expect(stored).toHaveLength(ENTITIES * 20 * 2);
  });

  it('takes readiness down and back up on both replicas', () => {
    for (const history of readiness) {
      expect(history[0]).toBe(true);
      expect(history).toContain(false);
      expect(history.at(-1)).toBe(true);
    }
  });

  it('resumes every partition without skipping or repeating a sequence', () => {
    const seqs = replicas.flatMap((r) => r.handled.map((h) => h.seq)).sort((a, b) => a - b);
    expect(seqs).toEqual(stored.map((m) => m.seq));
  });

  it('ends with the estimates of a single-process run', () => {
    const reference = trackStates(referenceEngine(scaleConfig(server.url), stored));
    const replicated = new Map([...trackStates(replicas[0]!.handle.engine), ...trackStates(replicas[1]!.handle.engine)]);
    expect(replicated.size).toBe(ENTITIES);
    for (const [entity, want] of reference) {
      const got = replicated.get(entity)!;
      want.x.forEach((v, i) => expect([entity, i, got.x[i]! - v]).toEqual([entity, i, expect.closeTo(0, 9)]));
    }
  });
});
