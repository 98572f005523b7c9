/**
 * SIGTERM to the real daemon process in scale-out mode (bin/statecast.js, replica 1 of 2): it
 * exits 0 after committing a final snapshot of every partition it owns, covering the last
 * message it handled, and releases each one so the next owner need not wait out the lease. The
 * snapshot interval is an hour away, so those snapshots can only be the stop's own.
 */
import type { JetStreamManager } from '@nats-io/jetstream';
import { Kvm } from '@nats-io/kv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { decodeOwnerRecord, ownerKey, type OwnerRecord } from '../../src/adapters/nats/owner-record.js';
import { cleanupDaemons, startDaemon, type DaemonExit, type DaemonProcess } from '../helpers/daemon-process.js';
import { startNatsServer, type NatsTestServer } from './nats-test-server.js';
import { devicePublisher, lastSeq, PARTITIONS, provision, readStream, scaleConfig, testClient, testMappings, until, yardTraffic, type NatsConnection } from './scale-fixtures.js';

const ENTITIES = 16;

let server: NatsTestServer;
let nc: NatsConnection;
let jsm: JetStreamManager;
let daemon: DaemonProcess;
let exit: DaemonExit;
const lastOfPartition = new Map<number, number>();
const records = new Map<number, OwnerRecord | null>();
let releasedBeforeStop = -1;

/** The partitions replica 1 of 2 owns. */
const owned = Array.from({ length: PARTITIONS }, (_, p) => p).filter((p) => p % 2 === 1);

async function ownerRecords(): Promise<Map<number, OwnerRecord | null>> {
  const kv = await new Kvm(nc).open('statecast-owners');
  const out = new Map<number, OwnerRecord | null>();
  for (const p of owned) {
    const entry = await kv.get(ownerKey(p));
    out.set(p, entry === null ? null : decodeOwnerRecord(entry.value));
  }
  return out;
}

beforeAll(async () => {
  server = await startNatsServer(testMappings());
  ({ nc, jsm } = await testClient(server.url));
  await provision(jsm, scaleConfig(server.url));
  daemon = await startDaemon({
    brokerUrl: server.mqttUrl,
    config: {
      broker: { protocolVersion: 4 },
      checkpoint: { enabled: false },
      scaleOut: { servers: [server.url], partitions: PARTITIONS, replicas: 2, ordinal: 1, snapshotIntervalS: 3600, leaseMs: 3000, renewMs: 300, readyPendingBelow: 1 },
      estimators: [yardEstimatorInput()],
    },
  });
  const devices = await devicePublisher(server.mqttUrl);
  await devices.publish(yardTraffic(ENTITIES, 5));
  await devices.close();
  const end = await lastSeq(jsm);
  for (const m of await readStream(jsm, end)) lastOfPartition.set(Number(m.subject.split('.')[1]), m.seq);
  // Handled up to the last message of each of its partitions, by the daemon's own metric.
  await until(async () => {
    const sequence = (await daemon.metrics()).get('statecast_partition_sequence');
    const seen = new Map((sequence?.samples ?? []).map((s) => [Number(s.labels['partition']), s.value]));
    return owned.every((p) => (seen.get(p) ?? 0) === (lastOfPartition.get(p) ?? 0));
  }, 'the daemon to handle every message of its partitions', 30_000);
  releasedBeforeStop = [...(await ownerRecords()).values()].filter((r) => r?.state === 'released').length;
  exit = await daemon.stop('SIGTERM', 20_000);
  for (const [p, r] of await ownerRecords()) records.set(p, r);
}, 120_000);

afterAll(async () => {
  await cleanupDaemons();
  await nc?.close();
  await server?.stop();
});

describe('the scale-out daemon on SIGTERM', () => {
  it('exits with code 0', () => {
    expect(exit).toEqual({ code: 0, signal: null });
  });

  it('releases every partition it owned, and none before the signal', () => {
    expect(releasedBeforeStop).toBe(0);
    for (const p of owned) expect([p, records.get(p)?.state, records.get(p)?.ordinal]).toEqual([p, 'released', 1]);
  });

  it('commits a final snapshot of each partition with traffic, covering its last message', () => {
    const withTraffic = owned.filter((p) => lastOfPartition.has(p));
    expect(withTraffic.length).toBeGreaterThan(0);
    for (const p of withTraffic) expect([p, records.get(p)?.snapshot?.seq]).toEqual([p, lastOfPartition.get(p)]);
  });
});
