import { stat } from 'node:fs/promises';
import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createCheckpointStore, restoreFromDocument } from '../../src/adapters/checkpoint/checkpoint-store.js';
import { structuralFingerprint } from '../../src/daemon/checkpoint-keeper.js';
import type { TrackDetail } from '../../src/engine/engine-view.js';
import { buildEstimatorRuntime } from '../../src/engine/estimator-runtime.js';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, within, type DaemonExit, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { mosquittoBinary, type TestMosquitto } from '../helpers/mosquitto.js';
import { EstimateFeed, publishReadings } from './estimate-feed.js';
import { tankEstimator, tankReadings } from './tank-farm-fixture.js';

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let feed: EstimateFeed | undefined;
const clients: MqttClient[] = [];
/** Status payloads seen by a client subscribed since before the stop. */
const statuses: string[] = [];
let checkpointBeforeStop = true;
let detailBeforeStop: TrackDetail;
let exit: DaemonExit;

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  // The periodic checkpoint is an hour away, so a file on disk after the stop is the stop's own.
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [tankEstimator()], checkpoint: { intervalS: 3600 } } });
  feed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  const publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  clients.push(publisher);
  const monitor = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  clients.push(monitor);
  const statusTopic = daemon.config.broker.statusTopic;
  monitor.on('message', (topic, payload) => {
    if (topic === statusTopic) statuses.push(payload.toString());
  });
  await monitor.subscribeAsync(statusTopic, { qos: 1 });

  const readings = tankReadings({ entity: 'tank-a', count: 20, startS: Math.floor(Date.now() / 1000) - 60 });
  await publishReadings(publisher, readings);
  await feed.waitForCount('tank-a', readings.length);
  detailBeforeStop = (await daemon.getJson<TrackDetail>('/api/v1/tracks/tanks/tank-a')).body;
  checkpointBeforeStop = await stat(daemon.checkpointPath).then(() => true, () => false);

  exit = await daemon.stop('SIGTERM', 15_000);
}, 90_000);

afterAll(async () => {
  await feed?.close();
  await Promise.all(clients.map((c) => endRawClient(c)));
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: SIGTERM', () => {
  it('exits with code 0 within 15 s', () => {
    expect(exit).toEqual({ code: 0, signal: null });
    expect(daemon.logs.find((l) => l.msg === 'stopping')?.['signal']).toBe('SIGTERM');
  });

  it('publishes {"status":"offline"} on the status topic as it stops, after its online status', async () => {
    await within((async () => {
      while (statuses.at(-1) !== '{"status":"offline"}') await new Promise((resolve) => setTimeout(resolve, 20));
    })(), 10_000, () => `an offline status; seen ${JSON.stringify(statuses)}`);
    expect(JSON.parse(statuses[0]!)).toMatchObject({ status: 'online' });
  });

  it.skipIf(mosquittoBinary() === null)('leaves the offline status retained for clients that connect later', async () => {
    // Only Mosquitto outlives the daemon; the embedded broker stops with it.
    const late = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
    clients.push(late);
    const retained = new Promise<{ payload: string; retain: boolean }>((resolve) => {
      late.once('message', (_topic, payload, packet) => resolve({ payload: payload.toString(), retain: packet.retain }));
    });
    await late.subscribeAsync(daemon.config.broker.statusTopic, { qos: 1 });
    expect(await within(retained, 10_000, () => 'the retained status')).toEqual({ payload: '{"status":"offline"}', retain: true });
  });

  it('writes a checkpoint on the way out that holds the track as it was', async () => {
    expect(checkpointBeforeStop).toBe(false);
    const config = daemon.config;
    const store = createCheckpointStore({ directory: config.checkpoint.directory, configFingerprint: structuralFingerprint(config) });
    const loaded = await store.load();
    if (loaded.kind !== 'ok') throw new Error(`no usable checkpoint: ${JSON.stringify(loaded)}`);
    const estimator = buildEstimatorRuntime(config.estimators[0]!).estimator;
    const restored = restoreFromDocument(loaded.doc, new Map([['tanks', estimator]]));
    const track = restored.tracks.get('tanks')?.get('tank-a');
    expect(track?.tS).toBe(detailBeforeStop.tS);
    expect(Array.from(track!.x)).toEqual(detailBeforeStop.state);
  });
});
