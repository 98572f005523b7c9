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
const objectWrites: { name: string; description: string }[] = [];
const firstEpochs = new Map<number, number>();
let handledByFirstAtLoss = -1;
let firstWritesAfterSettling = -1;

/** True once every partition the replica has handled messages in has a snapshot of its last one. */
function snapshottedAll(r: TestReplica): boolean {
  return r.node.stats().partitions.every((p) => p.seq === 0 || p.snapshotSeq === p.seq);
}

/** The partition and writer's epoch of a snapshot object write (its name and description). */
function writerOf(w: { name: string; description: string }): { partition: number; epoch: number } | null {
  const name = /^partition-(\d+)-[ab]$/.exec(w.name);
  const description = /^epoch (\d+) seq \d+$/.exec(w.description);
  return name === null || description === null ? null : { partition: Number(name[1]), epoch: Number(description[1]) };
}

/** Object writes under one of the first replica's epochs. */
function writesByFirst(): { name: string; description: string }[] {
  return objectWrites.filter((w) => {
    const writer = writerOf(w);
    return writer !== null && firstEpochs.get(writer.partition) === writer.epoch;
  });
}

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  const config = (id: string) => scaleConfig(server.url, { replicas: 2, ordinal: 0, replicaId: id, snapshotIntervalS: 0.1 });
  await provision(jsm, config('x'));
  nc.subscribe('$O.statecast-snapshots.M.>', {
    callback: (_err, msg) => {
      const meta = msg.json<{ name: string; description?: string; deleted?: boolean }>();
      if (meta.deleted !== true) objectWrites.push({ name: meta.name, description: meta.description ?? '' });
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
}, 90_000); // each wait is bounded; the sum needs room on a loaded machine

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

  it('lets the first write no snapshot once it lost', () => {
    expect(firstWritesAfterSettling).toBeGreaterThan(0); // it did write before
    expect(writesByFirst().length).toBe(firstWritesAfterSettling);
    expect(objectWrites.length).toBeGreaterThan(firstWritesAfterSettling); // the newcomer's
  });

  it('commits only the newcomer\'s snapshots, in at most two slots per partition', async () => {
    const kv = await new Kvm(nc).open('statecast-owners');
    const os = await new Objm(nc).open('statecast-snapshots');
    let committed = 0;
    for (const partition of firstEpochs.keys()) {
      const record = decodeOwnerRecord((await kv.get(ownerKey(partition)))!.value)!;
      if (record.snapshot === null) continue;
      const info = (await os.info(record.snapshot.object))!;
      expect([partition, writerOf({ name: info.name, description: info.description ?? '' })]).toEqual([partition, { partition, epoch: record.epoch }]);
      committed += 1;
    }
    expect(committed).toBeGreaterThan(0);
    const names = (await os.list()).map((o) => o.name);
    expect(names.every((n) => /^partition-\d+-[ab]$/.test(n))).toBe(true);
  });
});
