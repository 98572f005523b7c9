import type { MqttClient } from 'mqtt';
import { afterEach, describe, expect, it } from 'vitest';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { startSoakDaemon, waitUntil } from '../helpers/soak-daemon.js';
import { Valve, daemonOnline, firstReadingTimeS, publishReadings, readingCounts, tanksConfig } from './fault-fixtures.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the broker-kill fault test');

const COUNT = 9000;
const KILLS = 3;

const cleanups: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup().catch(() => undefined);
});

describe.skipIf(!hasMosquitto)('fault: the broker is killed and restarted under load', () => {
  it(`reconnects after each of ${KILLS} SIGKILLs and accounts for every QoS 1 reading`, { timeout: 120_000 }, async () => {
    // No persistence: a SIGKILLed broker keeps nothing, so each restart is a fresh broker and
    // the daemon must notice that its session is gone and subscribe again.
    const broker: TestMosquitto | null = await startMosquitto();
    if (broker === null) throw new Error('mosquitto disappeared');
    cleanups.push(() => broker.stop());
    const daemon = await startSoakDaemon({ config: tanksConfig(broker.url) });
    cleanups.push(() => daemon.stop());
    await daemon.waitReady();
    await daemonOnline(broker.url);

    // The gateway keeps its unacknowledged readings and sends them again after a reconnect. It
    // reconnects only when told: readings sent to a restarted broker before the daemon has
    // subscribed again would reach nobody, a loss no subscriber could prevent.
    const gateway: MqttClient = await connectRawClient(broker.url, {
      protocolVersion: 5,
      clean: false,
      clientId: `yard-gateway-${process.pid}`,
      properties: { sessionExpiryInterval: 3600 },
      reconnectPeriod: 0,
    });
    gateway.on('error', () => {});
    cleanups.push(() => endRawClient(gateway));

    let acked = 0;
    let issued = 0;
    let heldThroughOutages = 0;
    const t0S = firstReadingTimeS();
    const valve = new Valve();
    const sending = publishReadings(gateway, COUNT, t0S, { chunk: 40, periodMs: 40, valve, onAcknowledged: (n) => (acked = n), onIssued: (n) => (issued = n) });
    for (let kill = 1; kill <= KILLS; kill++) {
      await waitUntil(() => acked >= (COUNT * kill) / (KILLS + 1), `${kill}/${KILLS + 1} of the readings to be acknowledged`, 60_000);
      // A SIGKILLed broker without durable storage loses what it acknowledged but had not yet
      // delivered, and no client can prevent that (seen here: 1,193 of 9,000 readings under a
      // load average of 17). So the stream pauses until the daemon has everything the broker
      // acknowledged, the broker is killed, and the stream resumes at once into the gateway's
      // session store, whose readings are in flight through the outage and the reconnect.
      valve.close();
      await waitUntil(async () => (await readingCounts(daemon)).accepted >= issued, 'the daemon to have applied every reading sent', 30_000);
      const lost = daemon.find('lost the MQTT broker connection').length;
      await broker.kill('SIGKILL');
      valve.open();
      await daemon.waitForLog('lost the MQTT broker connection', lost + 1);
      await broker.restart();
      await daemonOnline(broker.url);
      heldThroughOutages += issued - acked;
      gateway.reconnect({ incomingStore: gateway.incomingStore, outgoingStore: gateway.outgoingStore });
    }
    await sending;

    await waitUntil(async () => (await readingCounts(daemon)).accepted >= COUNT, 'every reading to be accepted', 30_000)
      .catch(() => undefined);
    const counts = await readingCounts(daemon);
    // Every sequence number was applied once; anything more was a re-sent copy of one the old
    // broker had delivered but not acknowledged, which the daemon refuses as a duplicate.
    expect(counts.accepted).toBe(COUNT);
    expect(counts.rejected).toBe(counts.duplicates);
    expect(counts.accepted + counts.rejected).toBe(counts.received);
    expect(daemon.find('connected to the MQTT broker')).toHaveLength(KILLS + 1);
    expect(daemon.running).toBe(true);
    expect(heldThroughOutages).toBeGreaterThan(0);
    console.log(`broker kills: ${KILLS}, readings ${COUNT} (${heldThroughOutages} held in the gateway's session through the outages), accepted ${counts.accepted}, duplicates refused ${counts.duplicates}`);
  });
});
