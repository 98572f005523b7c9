import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { EstimateFeed, expectEstimateEquals, publishReadings } from './estimate-feed.js';
import { ReferenceEstimator, tankEstimator, tankReadings } from './tank-farm-fixture.js';

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let publisher: MqttClient | undefined;
let feed: EstimateFeed | undefined;

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [tankEstimator()] } });
  feed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
});

afterAll(async () => {
  await feed?.close();
  await endRawClient(publisher);
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: measurements in, estimates out', () => {
  it('publishes for each reading the estimate the core computes from the same sequence', async () => {
    const startS = Math.floor(Date.now() / 1000) - 120;
    const readings = tankReadings({ entity: 'tank-a', count: 60, startS });
    const reference = new ReferenceEstimator(daemon.config.estimators[0]!).run(readings);
    expect(reference.every((step) => step.accepted)).toBe(true);

    await publishReadings(publisher!, readings);
    const estimates = await feed!.waitForCount('tank-a', reference.length);

    expect(estimates).toHaveLength(reference.length);
    estimates.forEach((estimate, i) => {
      expect(estimate.kind).toBe('filtered');
      expectEstimateEquals(estimate, reference[i]!);
    });
  });

  it('keeps one track per tank, so interleaved readings of two tanks match two separate core runs', async () => {
    const startS = Math.floor(Date.now() / 1000) - 60;
    const b = tankReadings({ entity: 'tank-b', count: 30, startS, seed: 11 });
    const c = tankReadings({ entity: 'tank-c', count: 30, startS: startS + 0.25, seed: 23, levelEvery: 2 });
    const interleaved = b.flatMap((reading, i) => [reading, c[i]!]);
    const referenceB = new ReferenceEstimator(daemon.config.estimators[0]!).run(b);
    const referenceC = new ReferenceEstimator(daemon.config.estimators[0]!).run(c);

    await publishReadings(publisher!, interleaved);
    const [estimatesB, estimatesC] = await Promise.all([feed!.waitForCount('tank-b', 30), feed!.waitForCount('tank-c', 30)]);

    estimatesB.forEach((estimate, i) => expectEstimateEquals(estimate, referenceB[i]!));
    estimatesC.forEach((estimate, i) => expectEstimateEquals(estimate, referenceC[i]!));
  });
});
