import { afterEach, describe, expect, it } from 'vitest';
import { freePort } from '../helpers/free-port.js';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { startSoakDaemon, waitUntil, type SoakDaemon } from '../helpers/soak-daemon.js';
import { firstReadingTimeS, reading, readingCounts, tanksConfig } from './fault-fixtures.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the late-broker fault test');

const cleanups: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup().catch(() => undefined);
});

describe.skipIf(!hasMosquitto)('fault: the broker is unreachable at start', () => {
  it('is alive but not ready until the broker appears, then ready and estimating', async () => {
    const port = await freePort();
    const daemon: SoakDaemon = await startSoakDaemon({ config: tanksConfig(`mqtt://127.0.0.1:${port}`) });
    cleanups.push(() => daemon.stop());

    // Several refused connection attempts: the daemon is up, answers, and says it is not ready.
    await daemon.waitForLog('MQTT connection error');
    expect(daemon.find('connected to the MQTT broker')).toHaveLength(0);
    expect((await daemon.get('/healthz')).status).toBe(200);
    const notReady = await daemon.get('/readyz');
    expect(notReady.status).toBe(503);
    expect(JSON.parse(notReady.body)).toMatchObject({ checks: { broker: false } });

    const broker: TestMosquitto | null = await startMosquitto({ port });
    if (broker === null) throw new Error('mosquitto disappeared');
    cleanups.push(() => broker.stop());
    await daemon.waitReady(20_000);

    // Ready means estimating: a reading published now is accepted.
    const publisher = await connectRawClient(broker.url, { protocolVersion: 5 });
    cleanups.push(() => endRawClient(publisher));
    const { topic, payload } = reading(0, firstReadingTimeS());
    await publisher.publishAsync(topic, payload, { qos: 1 });
    await waitUntil(async () => (await readingCounts(daemon)).accepted === 1, 'the reading to be accepted');
    expect(daemon.running).toBe(true);
  });
});
