import type { MqttClient } from 'mqtt';
import { afterEach, describe, expect, it } from 'vitest';
import { createMqttConnection, type MqttConnection } from '../../../src/adapters/mqtt/mqtt-connection.js';
import { freePort } from '../../helpers/free-port.js';
import { connectRawClient, endRawClient, nextEvent, publishSequence, testBrokerConfig, uniqueTopicPrefix } from '../../helpers/mqtt-fixtures.js';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../../helpers/mosquitto.js';
import { createRecordingLogger, type RecordingLogger } from '../../helpers/recording-logger.js';

const COUNT = 2000;
const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the broker outage tests');

const brokers: TestMosquitto[] = [];
const connections: MqttConnection[] = [];
const clients: MqttClient[] = [];

afterEach(async () => {
  await Promise.all(connections.splice(0).map((c) => c.stop({ finalStatus: false })));
  await Promise.all(clients.splice(0).map((c) => endRawClient(c)));
  await Promise.all(brokers.splice(0).map((b) => b.stop()));
});

async function broker(options: { port?: number; persistence?: boolean } = {}): Promise<TestMosquitto> {
  const b = await startMosquitto(options);
  if (b === null) throw new Error('mosquitto disappeared');
  brokers.push(b);
  return b;
}

function daemonConnection(url: string, logger: RecordingLogger, extra: { filter?: string; onMessage?: (topic: string, payload: Buffer) => void } = {}): MqttConnection {
  const c = createMqttConnection({
    broker: testBrokerConfig(url, { reconnectMinMs: 20, reconnectMaxMs: 400 }),
    clientId: `statecast-outage-${Math.random().toString(16).slice(2, 10)}`,
    logger,
    subscriptions: extra.filter === undefined ? [] : [{ filter: extra.filter, qos: 1 }],
    onMessage: extra.onMessage ?? (() => {}),
    waitForConnect: false,
  });
  connections.push(c);
  return c;
}

describe.skipIf(!hasMosquitto)('broker outage (Mosquitto)', () => {
  it('loses no QoS 1 reading when the broker restarts mid-stream, retrying with growing delays meanwhile', async () => {
    const mosquitto = await broker({ persistence: true });
    const prefix = uniqueTopicPrefix('vehicle-yard');
    const logger = createRecordingLogger();
    const seen = new Set<number>();
    let atHalfway: () => void = () => {};
    let atEnd: () => void = () => {};
    const halfway = new Promise<void>((resolve) => (atHalfway = resolve));
    const ended = new Promise<void>((resolve) => (atEnd = resolve));
    const daemon = daemonConnection(mosquitto.url, logger, {
      filter: `${prefix}/#`,
      onMessage: (topic, payload) => {
        if (topic.endsWith('/end')) return atEnd();
        seen.add((JSON.parse(payload.toString()) as { seq: number }).seq);
        if (seen.size >= COUNT / 4) atHalfway();
      },
    });
    const subscribed = nextEvent(daemon, 'subscribed');
    await daemon.start();
    await subscribed;

    // The publisher keeps its own session too, so it re-sends what the broker had not acknowledged.
    const publisher = await connectRawClient(mosquitto.url, {
      protocolVersion: 5,
      clean: false,
      clientId: `tug-yard-gateway-${prefix.slice(-8)}`,
      properties: { sessionExpiryInterval: 3600 },
    });
    clients.push(publisher);
    const sending = publishSequence(publisher, `${prefix}/tug-04/position`, COUNT, 100);

    await halfway;
    await mosquitto.kill('SIGTERM'); // graceful, so Mosquitto saves the sessions it holds
    const scheduled = await logger.waitFor('reconnect scheduled', 3);
    await mosquitto.restart();
    await sending;
    await publisher.publishAsync(`${prefix}/end`, 'end', { qos: 1 });
    await ended;

    expect(seen.size).toBe(COUNT);
    const delaysMs = scheduled.slice(0, 3).map((e) => e.fields['delayMs'] as number);
    expect(delaysMs[0]).toBe(20);
    expect(delaysMs[1]).toBeGreaterThan(delaysMs[0] as number);
    expect(delaysMs[2]).toBeGreaterThan(delaysMs[1] as number);
    expect(daemon.connected).toBe(true);
  });

  it('starts while the broker is unreachable, reports not connected, and connects once it appears', async () => {
    const port = await freePort();
    const logger = createRecordingLogger();
    const daemon = daemonConnection(`mqtt://127.0.0.1:${port}`, logger);
    await daemon.start();
    expect(daemon.connected).toBe(false);
    await logger.waitFor('reconnect scheduled', 2);
    expect(daemon.connected).toBe(false);

    const connected = nextEvent(daemon, 'connect');
    await broker({ port });
    await connected;
    expect(daemon.connected).toBe(true);
  });

  it('reports the loss of the broker as a disconnect event', async () => {
    const mosquitto = await broker();
    const daemon = daemonConnection(mosquitto.url, createRecordingLogger());
    const connected = nextEvent(daemon, 'connect');
    await daemon.start();
    await connected;
    const disconnected = nextEvent(daemon, 'disconnect');
    await mosquitto.kill('SIGKILL');
    await disconnected;
    expect(daemon.connected).toBe(false);
  });
});
