import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupDaemons, startDaemon, type DaemonProcess } from '../helpers/daemon-process.js';
import { freePort } from '../helpers/free-port.js';
import { mosquittoBinary } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { sampleValue } from '../helpers/prometheus-text.js';
import { startTestBroker, type TestBroker } from '../helpers/test-broker.js';
import { EstimateFeed, publishReadings } from './estimate-feed.js';
import { tankEstimator, tankReadings } from './tank-farm-fixture.js';

// Mosquitto when installed; else test-broker.ts stands the embedded broker in (MQTT 3.1.1).
const protocolVersion = mosquittoBinary() === null ? 4 : 5;

let port = 0;
let daemon: DaemonProcess;
let broker: TestBroker | undefined;
let feed: EstimateFeed | undefined;
let publisher: MqttClient | undefined;

beforeAll(async () => {
  port = await freePort();
  daemon = await startDaemon({
    brokerUrl: `mqtt://127.0.0.1:${port}`,
    config: { estimators: [tankEstimator()], broker: { protocolVersion } },
    waitFor: 'alive',
  });
});

afterAll(async () => {
  await feed?.close();
  await endRawClient(publisher);
  await cleanupDaemons();
  await broker?.stop();
});

describe('daemon process: broker unreachable at start', () => {
  it('is alive: /healthz answers 200', async () => {
    expect((await daemon.get('/healthz')).status).toBe(200);
  });

  it('is not ready: /readyz answers 503 naming the broker check', async () => {
    const res = await daemon.getJson<{ status: string; checks: Record<string, boolean> }>('/readyz');
    expect(res.status).toBe(503);
    expect(res.body).toEqual({ status: 'not-ready', checks: { config: true, broker: false } });
    expect(sampleValue(await daemon.metrics(), 'statecast_broker_connected')).toBe(0);
  });

  it('becomes ready once a broker listens on that port', async () => {
    broker = await startTestBroker({ port });
    await daemon.waitForStatus('/readyz', 200, 30_000);
    const res = await daemon.getJson<{ status: string; checks: Record<string, boolean> }>('/readyz');
    expect(res.body).toEqual({ status: 'ready', checks: { config: true, broker: true } });
  });

  it('then subscribes and publishes estimates for readings', async () => {
    feed = await EstimateFeed.open(broker!.url, broker!.protocolVersion, 'statecast/tanks/+/estimate');
    publisher = await connectRawClient(broker!.url, { protocolVersion: broker!.protocolVersion });
    const readings = tankReadings({ entity: 'tank-c', count: 3, startS: Math.floor(Date.now() / 1000) - 10 });
    await publishReadings(publisher, readings);
    expect(await feed.waitForCount('tank-c', readings.length)).toHaveLength(readings.length);
  });
});
