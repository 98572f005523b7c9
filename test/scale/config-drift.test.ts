/**
 * Config drift: a message the server put in another partition than our hash gives its entity
 * (the server's mappings and the daemon's configuration disagree) is counted, announced and
 * shown as `statecast_partition_config_drift_total`; a subject no sensor pattern matches is
 * counted as unrouted. Messages are published straight onto partitioned subjects, as a server
 * with a stale mapping would store them.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { partitionOfEntity } from '../../src/adapters/nats/fnv1a-partition.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import { buildReplica, PARTITIONS, provision, scaleConfig, testClient, testMappings, tugName, until, type NatsConnection, type TestReplica } from './scale-fixtures.js';

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let replica: TestReplica;
const drifts: { partition: number; expected: number; subject: string }[] = [];

const vehicle = tugName(7);
const right = partitionOfEntity(vehicle, PARTITIONS);
const wrong = (right + 1) % PARTITIONS;
const fix = (k: number): string => JSON.stringify({ t: Math.floor(Date.now() / 1000) - 60 + k, lat: 51.95, lon: 4.05, hacc: 2, seq: k });

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  replica = buildReplica(scaleConfig(server.url, { replicas: 1, ordinal: 0, replicaId: 'drift-0' }));
  replica.node.events.on('drift', (d) => void drifts.push(d));
  await replica.node.start();
  const js = jsm.jetstream();
  await js.publish(`p.${right}.yard.${vehicle}.gnss`, fix(0));
  await js.publish(`p.${wrong}.yard.${vehicle}.gnss`, fix(1));
  await js.publish(`p.${right}.yard.${vehicle}.unknown-sensor`, fix(2));
  await until(() => replica.handled.length >= 3, 'the three messages handled');
});

afterAll(async () => {
  await replica?.node.stop();
  await nc?.close();
  await server?.stop();
});

describe('config drift', () => {
  it('counts a message stored in another partition than its entity hashes to, and only that one', () => {
    expect(replica.node.stats().counters.drift).toBe(1);
    expect(drifts).toEqual([{ partition: wrong, expected: right, subject: `p.${wrong}.yard.${vehicle}.gnss` }]);
  });

  it('counts a subject no sensor pattern matches as unrouted, not as drift', () => {
    expect(replica.node.stats().counters.unrouted).toBe(1);
  });
});
