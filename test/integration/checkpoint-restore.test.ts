import { stat } from 'node:fs/promises';
import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TrackDetail } from '../../src/engine/engine-view.js';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, within, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { EstimateFeed, expectEstimateEquals, publishReadings, type EstimatePayload } from './estimate-feed.js';
import { ReferenceEstimator, tankEstimator, tankReadings } from './tank-farm-fixture.js';

let mosquitto: TestMosquitto | null = null;
let first: DaemonProcess;
let second: DaemonProcess;
const feeds: EstimateFeed[] = [];
const clients: MqttClient[] = [];

const readings = tankReadings({ entity: 'tank-a', count: 41, startS: Math.floor(Date.now() / 1000) - 120 });
const beforeKill = readings.slice(0, 40);
const afterRestart = readings[40]!;

let detailBeforeKill: TrackDetail;
let detailAfterRestart: TrackDetail;
let firstEstimateAfterRestart: EstimatePayload;

async function mtimeMs(path: string): Promise<number> {
  return stat(path).then((s) => s.mtimeMs, () => 0);
}

/**
 * Resolves once the checkpoint file has been replaced twice after `sinceMs`: the second write
 * began after the first had finished, so it holds every reading handled before `sinceMs`.
 */
async function twoCheckpointsAfter(path: string, sinceMs: number): Promise<void> {
  await within((async () => {
    let last = sinceMs;
    for (let writes = 0; writes < 2;) {
      const m = await mtimeMs(path);
      if (m > last) {
        last = m;
        writes += 1;
      } else {
        await new Promise((resolve) => setTimeout(resolve, 50));
      }
    }
  })(), 20_000, () => `two checkpoint writes to ${path} after ${new Date(sinceMs).toISOString()}`);
}

async function openClients(daemon: DaemonProcess): Promise<{ feed: EstimateFeed; publisher: MqttClient }> {
  const feed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  feeds.push(feed);
  const publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  clients.push(publisher);
  return { feed, publisher };
}

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  first = await startDaemon({
    ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }),
    config: { estimators: [tankEstimator()], checkpoint: { intervalS: 0.5 } },
  });
  const before = await openClients(first);
  await publishReadings(before.publisher, beforeKill);
  await before.feed.waitForCount('tank-a', beforeKill.length);
  await twoCheckpointsAfter(first.checkpointPath, Date.now());
  detailBeforeKill = (await first.getJson<TrackDetail>('/api/v1/tracks/tanks/tank-a')).body;

  const exit = await first.kill();
  expect(exit.signal).toBe('SIGKILL');
  // With the embedded broker the old clients lost their broker with the daemon; start afresh.
  await Promise.all([...feeds.splice(0).map((f) => f.close()), ...clients.splice(0).map((c) => endRawClient(c))]);

  second = await first.restart();
  detailAfterRestart = (await second.getJson<TrackDetail>('/api/v1/tracks/tanks/tank-a')).body;
  const after = await openClients(second);
  await publishReadings(after.publisher, [afterRestart]);
  firstEstimateAfterRestart = await after.feed.waitFor((e) => e.entity === 'tank-a', 15_000, 'the first estimate after the restart');
}, 120_000);

afterAll(async () => {
  await Promise.all(feeds.map((f) => f.close()));
  await Promise.all(clients.map((c) => endRawClient(c)));
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: SIGKILL and restart', () => {
  it('logs that it restored one track from the checkpoint', async () => {
    const line = await second.waitForLog('restored tracks from the checkpoint');
    expect(line['tracks']).toBe(1);
  });

  it('shows the track initialized at the time it had before the kill, without new data', () => {
    expect(detailAfterRestart.initialized).toBe(true);
    expect(detailAfterRestart.tS).toBe(detailBeforeKill.tS);
    expect(detailAfterRestart.tS).toBe(beforeKill.at(-1)!.tS);
  });

  it('restores the state and covariance of before the kill to 1e-9', () => {
    expect(detailAfterRestart.stateNames).toEqual(detailBeforeKill.stateNames);
    detailBeforeKill.state.forEach((v, i) => expect(Math.abs(detailAfterRestart.state[i]! - v)).toBeLessThanOrEqual(1e-9));
    detailBeforeKill.covariance.forEach((row, i) => row.forEach((v, j) => {
      expect(Math.abs(detailAfterRestart.covariance[i]![j]! - v), `P[${i}][${j}]`).toBeLessThanOrEqual(1e-9);
    }));
  });

  it('continues the original run: the first estimate after new data equals the uninterrupted core run', () => {
    const reference = new ReferenceEstimator(second.config.estimators[0]!).run(readings);
    expect(reference.every((step) => step.accepted)).toBe(true);
    expectEstimateEquals(firstEstimateAfterRestart, reference.at(-1)!);
  });
});
