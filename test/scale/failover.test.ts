/**
 * Failover: replica 1 is SIGKILLed while devices keep publishing for 2 s, then restarted with
 * the same ordinal. It is not ready until it has caught up, no stream sequence is skipped, and
 * every entity's state afterwards equals a single-process run over the same stream.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnReplica, type ChildReplica } from './child-replica.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import type { ChildReport } from './replica-child.js';
import {
  devicePublisher, lastSeq, provision, readStream, referenceEngine, scaleConfig, testClient, testMappings, trackStates, until, yardTraffic,
  type NatsConnection, type StoredMessage,
} from './scale-fixtures.js';

const ENTITIES = 30;

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let zero: ChildReplica;
let killed: ChildReplica;
let restarted: ChildReplica;
let stored: StoredMessage[];
let roundsDuringOutage = 0;

const scaleOut = (ordinal: number) => ({ replicas: 2, ordinal, snapshotIntervalS: 0.2, leaseMs: 3000, renewMs: 300 });

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  zero = spawnReplica({ url: server.url, scaleOut: scaleOut(0), reportMessages: true });
  killed = spawnReplica({ url: server.url, scaleOut: scaleOut(1), reportMessages: true });
  await until(() => zero.ready() && killed.ready(), 'both replicas ready', 30_000);
  const devices = await devicePublisher(server.mqttUrl);
  let round = 0;
  await devices.publish(yardTraffic(ENTITIES, 10, round));
  round += 10;
  const before = await lastSeq(jsm);
  await until(() => zero.handled.length + killed.handled.length >= before, 'the first rounds handled');
  // Replica 1 has committed a snapshot of the first traffic in each partition it handled.
  const partitionsOfOne = new Set(killed.handled.map((h) => h.partition));
  await until(() => {
    const snapshotted = new Set(killed.reports.flatMap((r) => (r.type === 'snapshot' ? [r.partition] : [])));
    return [...partitionsOfOne].every((p) => snapshotted.has(p));
  }, 'replica 1 to snapshot the first traffic');
  await killed.kill('SIGKILL');
  const outageEnd = Date.now() + 2000;
  while (Date.now() < outageEnd) {
    await devices.publish(yardTraffic(ENTITIES, 1, round));
    round += 1;
    roundsDuringOutage += 1;
    await new Promise((resolve) => setTimeout(resolve, 20));
  }
  await devices.close();
  restarted = spawnReplica({ url: server.url, scaleOut: scaleOut(1), reportMessages: true });
  await until(() => restarted.ready(), 'the restarted replica to be ready', 30_000);
  const end = await lastSeq(jsm);
  stored = await readStream(jsm, end);
  await until(() => new Set([...zero.handled, ...killed.handled, ...restarted.handled].map((h) => h.seq)).size >= end, 'every sequence handled');
}, 120_000); // each wait above is bounded; a loaded 2-core machine needs the sum of several

afterAll(async () => {
  await Promise.all([zero?.stop(), restarted?.stop(), killed?.kill('SIGKILL')]);
  await nc?.close();
  await server?.stop();
});

describe('failover after SIGKILL', () => {
  it('keeps the restarted replica not ready until each of its partitions has caught up', () => {
    const readyReports = restarted.reports.filter((r): r is Extract<ChildReport, { type: 'ready' }> => r.type === 'ready');
    expect(readyReports[0]!.ready).toBe(false);
    const firstReady = readyReports.find((r) => r.ready)!;
    const lastOfPartition = new Map<number, number>();
    for (const m of stored) lastOfPartition.set(Number(m.subject.split('.')[1]), m.seq);
    for (const p of firstReady.partitions) expect([p.partition, p.seq]).toEqual([p.partition, lastOfPartition.get(p.partition) ?? 0]);
    // There was something to catch up on: traffic of the outage in replica 1's partitions. (How
    // many rounds fit into the 2 s depends on the machine's load, so only that there were some.)
    expect(roundsDuringOutage).toBeGreaterThan(0);
    const lastByKilled = killed.handled.reduce((m, h) => Math.max(m, h.seq), 0);
    expect(restarted.handled.filter((h) => h.seq > lastByKilled).length).toBeGreaterThan(0);
  });

  it('resumes each partition from its snapshot, not from the stream\'s start', () => {
    const consuming = restarted.reports.filter((r): r is Extract<ChildReport, { type: 'consuming' }> => r.type === 'consuming');
    expect(consuming).toHaveLength(32);
    expect(consuming.filter((c) => c.restored > 0).length).toBeGreaterThan(0);
    for (const c of consuming) if (c.restored > 0) expect(c.fromSeq).toBeGreaterThan(1);
  });

  it('skips no stream sequence', () => {
    const seen = new Set([...zero.handled, ...killed.handled, ...restarted.handled].map((h) => h.seq));
    const missing = stored.filter((m) => !seen.has(m.seq)).map((m) => m.seq);
    expect(missing).toEqual([]);
    // The restarted replica handled every message of its partitions after the sequence it resumed from.
    for (const c of restarted.reports) {
      if (c.type !== 'consuming') continue;
      const expected = stored.filter((m) => Number(m.subject.split('.')[1]) === c.partition && m.seq >= c.fromSeq).map((m) => m.seq);
      const got = restarted.handled.filter((h) => h.partition === c.partition).map((h) => h.seq);
      expect([c.partition, got]).toEqual([c.partition, expected]);
    }
  });

  it('ends with every entity in the state a single-process run reaches', async () => {
    const reference = trackStates(referenceEngine(scaleConfig(server.url), stored));
    const replicated = new Map([...(await zero.states()), ...(await restarted.states())]);
    expect([...replicated.keys()].sort()).toEqual([...reference.keys()].sort());
    expect(reference.size).toBe(ENTITIES);
    for (const [entity, want] of reference) {
      const got = replicated.get(entity)!;
      want.x.forEach((v, i) => expect([entity, 'x', i, got.x[i]! - v]).toEqual([entity, 'x', i, expect.closeTo(0, 9)]));
      want.P.forEach((v, i) => expect([entity, 'P', i, got.P[i]! - v]).toEqual([entity, 'P', i, expect.closeTo(0, 9)]));
    }
  });
});
