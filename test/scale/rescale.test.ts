/**
 * Rescale 2 → 3 as a StatefulSet rolls it: replica 2 (N = 3) starts first, then replicas 1 and
 * 0 are replaced by N = 3 versions, highest ordinal first, while devices keep publishing.
 * Partitions move whole to p mod 3, each moved partition continues from the snapshot its last
 * owner committed, and once a new owner consumes a partition no other replica handles it.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { Kvm } from '@nats-io/kv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { partitionOfEntity } from '../../src/adapters/nats/fnv1a-partition.js';
import { decodeOwnerRecord, ownerKey } from '../../src/adapters/nats/owner-record.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import {
  buildReplica, devicePublisher, lastSeq, PARTITIONS, provision, readStream, referenceEngine, scaleConfig, testClient, testMappings,
  trackStates, tugName, until, yardTraffic, type DevicePublisher, type NatsConnection, type StoredMessage, type TestReplica,
} from './scale-fixtures.js';

const ENTITIES = 40;

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let devices: DevicePublisher;
let stored: StoredMessage[];
let round = 0;
/** One log for every replica, in the order things happened (one event loop). */
const log: { replica: string; kind: 'handled' | 'consuming'; partition: number; seq: number; restored: number }[] = [];
const replicas = new Map<string, TestReplica>();

function start(id: string, replicasN: number, ordinal: number): Promise<void> {
  const r = buildReplica(scaleConfig(server.url, { replicas: replicasN, ordinal, replicaId: id, snapshotIntervalS: 0.2 }));
  replicas.set(id, r);
  r.node.events.on('message', (m) => void log.push({ replica: id, kind: 'handled', partition: m.partition, seq: m.seq, restored: 0 }));
  r.node.events.on('partition:consuming', (e) => void log.push({ replica: id, kind: 'consuming', partition: e.partition, seq: e.fromSeq, restored: e.restored }));
  return r.node.start();
}

async function publishRounds(n: number): Promise<void> {
  await devices.publish(yardTraffic(ENTITIES, n, round));
  round += n;
}

const finalIds = ['n3-0', 'n3-1', 'n3-2'];

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  devices = await devicePublisher(server.mqttUrl);
  await Promise.all([start('n2-0', 2, 0), start('n2-1', 2, 1)]);
  await publishRounds(10);
  const upTo = await lastSeq(jsm);
  await until(() => log.filter((l) => l.kind === 'handled').length >= upTo, 'the first traffic handled');
  await until(() => ['n2-0', 'n2-1'].every((id) => replicas.get(id)!.node.stats().partitions.every((p) => p.snapshotSeq === p.seq)), 'snapshots of it');
  await start('n3-2', 3, 2);
  await publishRounds(5);
  await replicas.get('n2-1')!.node.stop();
  await start('n3-1', 3, 1);
  await publishRounds(5);
  await replicas.get('n2-0')!.node.stop();
  await start('n3-0', 3, 0);
  await publishRounds(5);
  await until(() => finalIds.every((id) => replicas.get(id)!.node.ready()), 'the three new replicas ready');
  const end = await lastSeq(jsm);
  stored = await readStream(jsm, end);
  const lastOf = new Map(stored.map((m) => [Number(m.subject.split('.')[1]), m.seq]));
  await until(() => finalIds.every((id) => replicas.get(id)!.node.stats().partitions.every((p) => p.seq === (lastOf.get(p.partition) ?? 0))), 'every message handled by the new replicas');
}, 120_000); // five replicas start and stop in turn: each wait is bounded, their sum needs room

afterAll(async () => {
  await devices?.close();
  await Promise.all([...replicas.values()].map((r) => r.node.stop()));
  await nc?.close();
  await server?.stop();
});

describe('rescale from 2 to 3 replicas', () => {
  it('leaves each partition with the new replica p mod 3', async () => {
    const kv = await new Kvm(nc).open('statecast-owners');
    for (let p = 0; p < PARTITIONS; p++) {
      const record = decodeOwnerRecord((await kv.get(ownerKey(p)))!.value)!;
      expect([p, record.replica, record.state]).toEqual([p, `n3-${p % 3}`, 'active']);
    }
  });

  it('moves partitions whole: each entity lives in exactly the replica owning its partition', () => {
    for (let i = 1; i <= ENTITIES; i++) {
      const entity = tugName(i);
      const holders = finalIds.filter((id) => replicas.get(id)!.handle.engine.tracks().get('yard')!.has(entity));
      expect([entity, holders]).toEqual([entity, [`n3-${partitionOfEntity(entity, PARTITIONS) % 3}`]]);
    }
  });

  it('continues each moved partition from the snapshot its last owner committed', () => {
    const moved = log.filter((l) => l.kind === 'consuming' && finalIds.includes(l.replica));
    const withTraffic = new Set(stored.filter((m) => m.seq <= 800).map((m) => Number(m.subject.split('.')[1])));
    for (const c of moved) {
      if (!withTraffic.has(c.partition)) continue;
      expect([c.partition, c.restored > 0, c.seq > 1]).toEqual([c.partition, true, true]);
    }
    expect(moved.length).toBe(PARTITIONS);
  });

  it('lets no other replica handle a partition once its new owner consumes it', () => {
    log.forEach((entry, index) => {
      if (entry.kind !== 'consuming' || !finalIds.includes(entry.replica)) return;
      const later = log.slice(index + 1).filter((l) => l.kind === 'handled' && l.partition === entry.partition && l.replica !== entry.replica);
      expect([entry.partition, later.length]).toEqual([entry.partition, 0]);
    });
  });

  it('ends with every entity in the state a single-process run reaches', () => {
    const reference = trackStates(referenceEngine(scaleConfig(server.url), stored));
    const replicated = new Map(finalIds.flatMap((id) => [...trackStates(replicas.get(id)!.handle.engine)]));
    expect(replicated.size).toBe(ENTITIES);
    for (const [entity, want] of reference) {
      const got = replicated.get(entity)!;
      want.x.forEach((v, i) => expect([entity, i, got.x[i]! - v]).toEqual([entity, i, expect.closeTo(0, 9)]));
    }
  });
});
