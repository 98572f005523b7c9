/**
 * The partition mapping contract, against a real nats-server: devices publish plain MQTT, the
 * server's subject mappings put each message into a virtual partition, and our FNV-1a hash
 * must predict that partition for every entity (else replicas would disagree with the broker).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fnv1a32, partitionOfTokens } from '../../src/adapters/nats/fnv1a-partition.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import {
  devicePublisher, lastSeq, PARTITIONS, provision, readStream, scaleConfig, testClient, testMappings, tugName, until, yardTraffic,
  type NatsConnection, type StoredMessage,
} from './scale-fixtures.js';
import type { JetStreamManager } from '@nats-io/jetstream';

const ENTITIES = 40;
const ROUNDS = 3;
const farmPatterns = ['farm/{site}/{tank}/level'];

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let stored: StoredMessage[];

beforeAll(async () => {
  server = await startNatsServer(testMappings(farmPatterns));
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  const devices = await devicePublisher(server.mqttUrl);
  const sent = await devices.publish(yardTraffic(ENTITIES, ROUNDS));
  await devices.publish((function* () {
    for (let s = 1; s <= 4; s++) for (const tank of ['tank-a', 'tank-b', 'tank-c']) yield { topic: `farm/site-${s}/${tank}/level`, payload: '{"level_m":1}' };
  })());
  await devices.close();
  await until(async () => (await lastSeq(jsm)) >= sent + 12, 'every published message in the stream');
  stored = await readStream(jsm, await lastSeq(jsm));
});

afterAll(async () => {
  await nc?.close();
  await server?.stop();
});

/** Partition token of each stored subject, by the entity named in it. */
function partitionsByEntity(filter: (tokens: string[]) => string | null): Map<string, Set<number>> {
  const out = new Map<string, Set<number>>();
  for (const m of stored) {
    const tokens = m.subject.split('.');
    const entity = filter(tokens);
    if (entity === null) continue;
    let set = out.get(entity);
    if (set === undefined) out.set(entity, (set = new Set()));
    set.add(Number(tokens[1]));
  }
  return out;
}

describe('partition mapping contract', () => {
  it('hashes with FNV-1a 32 as its reference vectors give', () => {
    // Test vectors from the FNV reference test suite (Noll, "FNV hash test vectors"): FNV-1a 32-bit.
    const bytes = (s: string): Uint8Array => new TextEncoder().encode(s);
    expect(fnv1a32(bytes(''))).toBe(0x811c9dc5);
    expect(fnv1a32(bytes('a'))).toBe(0xe40c292c);
    expect(fnv1a32(bytes('foobar'))).toBe(0xbf9cf968);
  });

  it('stores every yard message under a subject with a partition token in range', () => {
    const yard = stored.filter((m) => m.subject.split('.')[2] === 'yard');
    expect(yard).toHaveLength(ENTITIES * ROUNDS * 2);
    for (const m of yard) expect(m.subject).toMatch(/^p\.(\d|[1-5]\d|6[0-3])\.yard\.tug-\d{5}\.(gnss|wheel)$/);
  });

  it('puts each vehicle in exactly one partition, shared by its GNSS and wheel topics', () => {
    const byEntity = partitionsByEntity((t) => (t[2] === 'yard' ? t[3]! : null));
    expect(byEntity.size).toBe(ENTITIES);
    for (const [entity, partitions] of byEntity) expect([entity, partitions.size]).toEqual([entity, 1]);
    const sensorsOf = partitionsByEntity((t) => (t[2] === 'yard' ? `${t[3]}/${t[4]}` : null));
    for (let i = 1; i <= ENTITIES; i++) {
      expect(sensorsOf.get(`${tugName(i)}/gnss`)).toEqual(sensorsOf.get(`${tugName(i)}/wheel`));
    }
  });

  it('puts each vehicle in the partition our hash predicts', () => {
    const byEntity = partitionsByEntity((t) => (t[2] === 'yard' ? t[3]! : null));
    for (const [entity, partitions] of byEntity) {
      expect([entity, [...partitions]]).toEqual([entity, [partitionOfTokens([entity], PARTITIONS)]]);
    }
    // 40 vehicles over 64 partitions: a hash that ignored the token would put them all in one.
    expect(new Set([...byEntity.values()].map((s) => [...s][0])).size).toBeGreaterThan(20);
  });

  it('hashes the tokens of a two-wildcard entity concatenated, in mapping order', () => {
    const byTank = partitionsByEntity((t) => (t[2] === 'farm' ? `${t[3]}/${t[4]}` : null));
    expect(byTank.size).toBe(12);
    for (const [entity, partitions] of byTank) {
      const [site, tank] = entity.split('/') as [string, string];
      expect([entity, [...partitions]]).toEqual([entity, [partitionOfTokens([site, tank], PARTITIONS)]]);
    }
  });
});
