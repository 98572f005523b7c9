/**
 * Two replicas split the entities between them: every entity is estimated by exactly one, each
 * handles only its own partitions (p mod 2), and each entity's measurements keep their order.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { partitionOfEntity } from '../../src/adapters/nats/fnv1a-partition.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import {
  buildReplica, devicePublisher, PARTITIONS, provision, scaleConfig, testClient, testMappings, tugName, until, yardTraffic,
  type NatsConnection, type TestReplica,
} from './scale-fixtures.js';

const ENTITIES = 50;
const ROUNDS = 10; // 50 vehicles × 10 rounds × (GNSS + wheel) = 1,000 messages

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let replicas: TestReplica[] = [];

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  replicas = [0, 1].map((ordinal) => buildReplica(scaleConfig(server.url, { replicas: 2, ordinal, replicaId: `split-${ordinal}` })));
  await Promise.all(replicas.map((r) => r.node.start()));
  await until(() => replicas.every((r) => r.node.ready()), 'both replicas ready');
  const devices = await devicePublisher(server.mqttUrl);
  await devices.publish(yardTraffic(ENTITIES, ROUNDS));
  await devices.close();
  await until(() => replicas.reduce((n, r) => n + r.handled.length, 0) >= 1000, 'both replicas to handle 1,000 messages');
});

afterAll(async () => {
  await Promise.all(replicas.map((r) => r.node.stop()));
  await nc?.close();
  await server?.stop();
});

describe('two replicas', () => {
  it('handle the 1,000 messages once between them', () => {
    const seqs = replicas.flatMap((r) => r.handled.map((h) => h.seq)).sort((a, b) => a - b);
    expect(seqs).toEqual(Array.from({ length: 1000 }, (_, i) => i + 1));
  });

  it('each handle only the partitions p mod 2 = ordinal', () => {
    replicas.forEach((r, ordinal) => {
      expect(r.handled.length).toBeGreaterThan(0);
      expect(r.handled.filter((h) => h.partition % 2 !== ordinal)).toEqual([]);
    });
  });

  it('estimate every entity between them, none twice', () => {
    const [a, b] = replicas.map((r) => r.estimated) as [Set<string>, Set<string>];
    const all = Array.from({ length: ENTITIES }, (_, i) => tugName(i + 1));
    expect([...new Set([...a, ...b])].sort()).toEqual(all);
    expect([...a].filter((e) => b.has(e))).toEqual([]);
    for (const e of a) expect([e, partitionOfEntity(e, PARTITIONS) % 2]).toEqual([e, 0]);
  });

  it('apply each entity\'s measurements in their published order', () => {
    for (const r of replicas) {
      const last = new Map<string, number>();
      for (const m of r.accepted) {
        const key = `${m.entity}/${m.sensor}`;
        const previous = last.get(key) ?? -1;
        expect([key, m.sequence! > previous]).toEqual([key, true]);
        last.set(key, m.sequence!);
      }
      expect(r.accepted.length).toBeGreaterThan(0);
    }
    // The stream order inside each partition is the order the broker stored.
    for (const r of replicas) {
      const byPartition = new Map<number, number>();
      for (const h of r.handled) {
        expect(h.seq).toBeGreaterThan(byPartition.get(h.partition) ?? 0);
        byPartition.set(h.partition, h.seq);
      }
    }
  });
});
