/**
 * Fencing: a second process with the same ordinal starts while the first lives (a StatefulSet
 * never does this on purpose; a partitioned node or a hand-started copy can). The newcomer's
 * claim bumps every epoch; the first process must stop those partitions, report not ready and
 * write no snapshot, so exactly one replica owns each partition.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { Kvm } from '@nats-io/kv';
import { Objm } from '@nats-io/obj';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeOwnerRecord, ownerKey } from '../../src/adapters/nats/owner-record.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import {
  buildReplica, devicePublisher, provision, scaleConfig, testClient, testMappings, until, yardTraffic,
  type DevicePublisher, type NatsConnection, type TestReplica,
} from './scale-fixtures.js';

const ENTITIES = 24;

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let devices: DevicePublisher;
let first: TestReplica;
let second: TestReplica;
/** Snapshot objects written (not deletions), seen on the object store's metadata subjects. */
const objectWrites: string[] = [];
const firstEpochs = new Map<number, number>();
let handledByFirstAtLoss = -1;
let firstWritesAfterSettling = -1;

/** True once every partition the replica has handled messages in has a snapshot of its last one. */
function snapshottedAll(r: TestReplica): boolean {
  return r.node.stats().partitions.every((p) => p.seq === 0 || p.snapshotSeq === p.seq);
}

/** Object writes under one of the first replica's epochs. */
function writesByFirst(): string[] {
  return objectWrites.filter((name) => {
    const m = /^partition-(\d+)-e(\d+)-s\d+-w\d+$/.exec(name);
    return m !== null && firstEpochs.get(Number(m[1])) === Number(m[2]);
  });
}

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  const config = (id: string) => scaleConfig(server.url, { replicas: 2, ordinal: 0, replicaId: id, snapshotIntervalS: 0.1 });
  await provision(jsm, config('x'));
  nc.subscribe('$O.statecast-snapshots.M.>', {
    callback: (_err, msg) => {
      const meta = msg.json<{ name: string; deleted?: boolean }>();
      if (meta.deleted !== true) objectWrites.push(meta.name);
    },
  });
  devices = await devicePublisher(server.mqttUrl);
  first = buildReplica(config('first'));
  await first.node.start();
  await devices.publish(yardTraffic(ENTITIES, 5, 0));
  await until(() => first.handled.length > 0 && snapshottedAll(first), 'the first replica to snapshot its partitions');
  for (const p of first.node.stats().partitions) firstEpochs.set(p.partition, p.epoch);
  let lost = 0;
  first.node.events.on('partition:lost', () => {
    if (++lost === firstEpochs.size) handledByFirstAtLoss = first.handled.length;
  });
  second = buildReplica(config('second'));
  const publishing = devices.publish(yardTraffic(ENTITIES, 20, 5)); // traffic goes on during the takeover
  await second.node.start();
  await publishing;
  await until(() => second.node.ready(), 'the second replica to be ready');
  await devices.publish(yardTraffic(ENTITIES, 5, 25));
  await until(() => snapshottedAll(second), 'the second replica to snapshot the new traffic');
  firstWritesAfterSettling = writesByFirst().length;
  await devices.publish(yardTraffic(ENTITIES, 5, 30));
  await until(() => snapshottedAll(second) && second.handled.length > 0, 'the second replica to snapshot more traffic');
});

afterAll(async () => {
  await devices?.close();
  await second?.node.stop();
  await first?.node.stop();
  await nc?.close();
  await server?.stop();
});

describe('a second process with the same ordinal', () => {
  it('leaves exactly one owner per partition: the newcomer, with a higher epoch', async () => {
    const kv = await new Kvm(nc).open('statecast-owners');
    for (const [partition, epoch] of firstEpochs) {
      const entry = await kv.get(ownerKey(partition));
      const record = decodeOwnerRecord(entry!.value)!;
      expect([partition, record.replica, record.epoch > epoch]).toEqual([partition, 'second', true]);
    }
    expect(second.node.stats().partitions.every((p) => p.phase === 'consuming')).toBe(true);
  });

  it('makes the first stop every partition and handle no message after', () => {
    expect(first.node.stats().partitions.map((p) => p.phase)).toEqual(Array(firstEpochs.size).fill('lost'));
    expect(handledByFirstAtLoss).toBeGreaterThan(0);
    expect(first.handled.length).toBe(handledByFirstAtLoss);
  });

  it('makes the first report not ready while the newcomer is ready', () => {
    expect(first.node.ready()).toBe(false);
    expect(second.node.ready()).toBe(true);
  });

  it('lets the first write no snapshot once it lost, and leaves none of its epoch behind', async () => {
    expect(writesByFirst().length).toBe(firstWritesAfterSettling);
    const os = await new Objm(nc).open('statecast-snapshots');
    const names = (await os.list()).map((o) => o.name);
    expect(names.length).toBeGreaterThan(0);
    expect(names.filter((n) => writesByFirst().includes(n))).toEqual([]);
  });

  it('commits only the newcomer\'s snapshots', async () => {
    const kv = await new Kvm(nc).open('statecast-owners');
    for (const partition of firstEpochs.keys()) {
      const record = decodeOwnerRecord((await kv.get(ownerKey(partition)))!.value)!;
      if (record.snapshot !== null) expect(record.snapshot.object).toMatch(new RegExp(`^partition-${partition}-e${record.epoch}-`));
    }
  });
});
