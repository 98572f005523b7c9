import type { IClientOptions, MqttClient } from 'mqtt';
import mqtt from 'mqtt';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { createMqttConnection, type MqttConnection, type MqttConnectionOptions } from '../../../src/adapters/mqtt/mqtt-connection.js';
import {
  connectRawClient,
  endRawClient,
  nextEvent,
  nextMessage,
  testBrokerConfig,
  uniqueTopicPrefix,
} from '../../helpers/mqtt-fixtures.js';
import { mosquittoBinary } from '../../helpers/mosquitto.js';
import { createRecordingLogger } from '../../helpers/recording-logger.js';
import { startTestBroker, type TestBroker } from '../../helpers/test-broker.js';

let broker: TestBroker;
let observer: MqttClient;
const connections: MqttConnection[] = [];

beforeAll(async () => {
  broker = await startTestBroker();
  observer = await connectRawClient(broker.url, { protocolVersion: broker.protocolVersion });
});
afterEach(async () => {
  await Promise.all(connections.splice(0).map((c) => c.stop({ finalStatus: false })));
});
afterAll(async () => {
  await endRawClient(observer);
  await broker?.stop();
});

function connection(overrides: Partial<MqttConnectionOptions> & { brokerOverrides?: Record<string, unknown> } = {}): MqttConnection {
  const { brokerOverrides, ...rest } = overrides;
  const c = createMqttConnection({
    broker: testBrokerConfig(broker.url, { protocolVersion: broker.protocolVersion, ...brokerOverrides }),
    clientId: `statecast-test-${connections.length}-${Math.random().toString(16).slice(2, 8)}`,
    logger: createRecordingLogger(),
    subscriptions: [],
    onMessage: () => {},
    ...rest,
  });
  connections.push(c);
  return c;
}

describe('mqtt connection', () => {
  it('delivers subscribed messages with the arrival time read from its clock', async () => {
    const prefix = uniqueTopicPrefix('tank-farm');
    const received: Array<{ topic: string; payload: string; arrivalMs: number }> = [];
    const arrived = new Promise<void>((resolve) => {
      const c = connection({
        subscriptions: [{ filter: `${prefix}/+/level`, qos: 1 }],
        now: () => 1_700_000_000_123,
        onMessage: (topic, payload, arrivalMs) => {
          received.push({ topic, payload: payload.toString(), arrivalMs });
          resolve();
        },
      });
      c.on('subscribed', () => void observer.publish(`${prefix}/tank-a/level`, '{"levelM":3.2}', { qos: 1 }));
      void c.start();
    });
    await arrived;
    expect(received).toEqual([{ topic: `${prefix}/tank-a/level`, payload: '{"levelM":3.2}', arrivalMs: 1_700_000_000_123 }]);
  });

  it('publishes outgoing messages with the requested QoS and retain flag', async () => {
    const topic = `${uniqueTopicPrefix('vehicle-yard')}/tug-01/estimate`;
    await observer.subscribeAsync(topic, { qos: 1 });
    const c = connection();
    await c.start();
    const got = new Promise<{ payload: string; qos: number }>((resolve) => {
      observer.on('message', (t, payload, packet) => {
        if (t === topic) resolve({ payload: payload.toString(), qos: packet.qos });
      });
    });
    c.publish(topic, '{"xM":12.5}', { qos: 1, retain: false });
    expect(await got).toEqual({ payload: '{"xM":12.5}', qos: 1 });
  });

  it('sends messages published over several event-loop turns in one socket write, in order', async () => {
    const topic = `${uniqueTopicPrefix('vehicle-yard')}/tug-04/estimate`;
    await observer.subscribeAsync(topic, { qos: 0 });
    let client: MqttClient | undefined;
    // A long delay so that a slow machine cannot split the batch by the clock.
    const c = connection({ flushDelayMs: 500, connectClient: (url: string, options: IClientOptions) => (client = mqtt.connect(url, options)) });
    await c.start();
    const socket = client!.stream as unknown as { _write: (...a: unknown[]) => void; _writev: (...a: unknown[]) => void };
    let writes = 0;
    const write = socket._write.bind(socket);
    const writev = socket._writev.bind(socket);
    socket._write = (...a) => void ((writes += 1), write(...a));
    socket._writev = (...a) => void ((writes += 1), writev(...a));
    const got: string[] = [];
    const all = new Promise<void>((resolve) => {
      observer.on('message', (t, p) => {
        if (t === topic && got.push(p.toString()) === 10) resolve();
      });
    });
    for (let seq = 0; seq < 10; seq += 1) {
      c.publish(topic, `{"seq":${seq}}`, { qos: 0 });
      await new Promise((r) => setImmediate(r));
    }
    await all;
    expect(got).toEqual(Array.from({ length: 10 }, (_, seq) => `{"seq":${seq}}`));
    expect(writes).toBe(1);
  });

  it('publishes a retained QoS 0 message that a later subscriber receives as retained', async () => {
    const topic = `${uniqueTopicPrefix('tank-farm')}/tank-c/estimate`;
    const c = connection();
    await c.start();
    c.publish(topic, '{"levelM":2.25}', { qos: 0, retain: true });
    const late = await connectRawClient(broker.url, { protocolVersion: broker.protocolVersion });
    try {
      // Retry the subscription until the broker has the message (it left within the batch delay).
      type Received = { payload: string; retain: boolean; qos: number } | undefined;
      let got: Received;
      for (let attempt = 0; attempt < 50 && got === undefined; attempt += 1) {
        const arrived = new Promise<Received>((resolve) => {
          const timer = setTimeout(() => resolve(undefined), 100);
          late.once('message', (_t, payload, packet) => {
            clearTimeout(timer);
            resolve({ payload: payload.toString(), retain: packet.retain, qos: packet.qos });
          });
        });
        await late.subscribeAsync(topic, { qos: 1 });
        got = await arrived;
        if (got === undefined) await late.unsubscribeAsync(topic);
      }
      expect(got).toEqual({ payload: '{"levelM":2.25}', retain: true, qos: 0 });
    } finally {
      await endRawClient(late);
    }
  });

  it('holds messages published before the first connection and sends them once connected', async () => {
    const topic = `${uniqueTopicPrefix('tank-farm')}/tank-b/estimate`;
    await observer.subscribeAsync(topic, { qos: 1 });
    const got = nextMessage(observer, topic);
    const c = connection({ waitForConnect: false });
    c.publish(topic, '{"levelM":1.5}', { qos: 1 });
    await c.start();
    expect(await got).toBe('{"levelM":1.5}');
  });

  it('publishes a retained online status with the connect time on connect', async () => {
    const statusTopic = `${uniqueTopicPrefix('tank-farm')}/status`;
    const c = connection({ statusTopic, now: () => Date.UTC(2031, 0, 2, 3, 4, 5) });
    await c.start();
    // A client subscribing after the fact still sees it: the status is retained.
    const late = await connectRawClient(broker.url, { protocolVersion: broker.protocolVersion });
    try {
      const status = nextMessage(late, statusTopic);
      await late.subscribeAsync(statusTopic, { qos: 1 });
      expect(JSON.parse(await status)).toEqual({ status: 'online', since: '2031-01-02T03:04:05.000Z' });
    } finally {
      await endRawClient(late);
    }
  });

  it('leaves the last will offline on the status topic when the connection is lost without a goodbye', async () => {
    const statusTopic = `${uniqueTopicPrefix('vehicle-yard')}/status`;
    let client: MqttClient | undefined;
    const c = connection({
      statusTopic,
      connectClient: (url: string, options: IClientOptions) => (client = mqtt.connect(url, options)),
    });
    await c.start();
    // One listener from before the loss, so no status can slip between two awaits.
    const statuses: string[] = [];
    const offlineThenOnline = new Promise<void>((resolve) => {
      const onMessage = (topic: string, payload: Buffer): void => {
        if (topic !== statusTopic) return;
        statuses.push(payload.toString());
        const offlineAt = statuses.indexOf('{"status":"offline"}');
        if (offlineAt < 0 || !statuses.slice(offlineAt + 1).some((s) => s.includes('"online"'))) return;
        observer.off('message', onMessage);
        resolve();
      };
      observer.on('message', onMessage);
    });
    await observer.subscribeAsync(statusTopic, { qos: 1 });
    client?.stream.destroy();
    // The broker publishes the will, and the connection comes back by itself and says so.
    await offlineThenOnline;
    expect(statuses.filter((s) => s.includes('offline'))).toEqual(['{"status":"offline"}']);
  });

  it('publishes a retained offline status on stop when asked for a final status', async () => {
    const statusTopic = `${uniqueTopicPrefix('tank-farm')}/status`;
    const c = connection({ statusTopic });
    await c.start();
    await observer.subscribeAsync(statusTopic, { qos: 1 });
    const offline = nextMessage(observer, statusTopic, (p) => p.includes('offline'));
    await c.stop({ finalStatus: true });
    expect(JSON.parse(await offline)).toEqual({ status: 'offline' });
    expect(c.connected).toBe(false);
  });

  it('sends on stop the messages still queued behind the in-flight bound, then the offline status', async () => {
    const prefix = uniqueTopicPrefix('vehicle-yard');
    const topic = `${prefix}/tug-06/estimate`;
    const statusTopic = `${prefix}/status`;
    await observer.subscribeAsync([topic, statusTopic], { qos: 1 });
    const got: string[] = [];
    const offline = new Promise<void>((resolve) => {
      observer.on('message', (t, p) => {
        if (t === topic) got.push(p.toString());
        if (t === statusTopic && p.toString().includes('offline')) resolve();
      });
    });
    const c = connection({ statusTopic, brokerOverrides: { maxInflight: 1 }, stopTimeoutMs: 3000 });
    await c.start();
    for (let seq = 0; seq < 20; seq += 1) c.publish(topic, String(seq), { qos: 1 });
    await c.stop({ finalStatus: true });
    await offline;
    expect(got).toEqual(Array.from({ length: 20 }, (_, seq) => String(seq)));
    expect(c.droppedCount).toBe(0);
  });

  it('drops the oldest outgoing messages past its bound while offline and counts them', async () => {
    const topic = `${uniqueTopicPrefix('vehicle-yard')}/tug-02/estimate`;
    await observer.subscribeAsync(topic, { qos: 1 });
    const c = connection({ waitForConnect: false, maxQueuedOutgoing: 2 });
    for (let seq = 0; seq < 5; seq += 1) c.publish(topic, String(seq), { qos: 1 });
    expect(c.droppedCount).toBe(3);
    const got: string[] = [];
    const both = new Promise<void>((resolve) =>
      observer.on('message', (t, p) => {
        if (t === topic && got.push(p.toString()) === 2) resolve();
      }),
    );
    await c.start();
    await both;
    expect(got).toEqual(['3', '4']);
  });

  it('never logs the password', async () => {
    const logger = createRecordingLogger();
    const c = connection({
      logger,
      brokerOverrides: { url: broker.url.replace('mqtt://', 'mqtt://yard-ops:url-secret-7@'), username: 'yard-ops', password: 'field-secret-9' },
    });
    await c.start();
    await c.stop({ finalStatus: true });
    const logged = JSON.stringify(logger.entries);
    expect(logger.entries.length).toBeGreaterThan(0);
    expect(logged).not.toContain('field-secret-9');
    expect(logged).not.toContain('url-secret-7');
  });

  it('keeps delivering after the message handler throws', async () => {
    const prefix = uniqueTopicPrefix('tank-farm');
    const logger = createRecordingLogger();
    const second = new Promise<string>((resolve) => {
      const c = connection({
        logger,
        subscriptions: [{ filter: `${prefix}/#`, qos: 1 }],
        onMessage: (_topic, payload) => {
          if (payload.toString() === 'bad') throw new Error('malformed reading');
          resolve(payload.toString());
        },
      });
      c.on('subscribed', () => {
        observer.publish(`${prefix}/tank-a/level`, 'bad', { qos: 1 });
        observer.publish(`${prefix}/tank-a/level`, 'good', { qos: 1 });
      });
      void c.start();
    });
    expect(await second).toBe('good');
    expect(logger.find('the message handler threw')).toHaveLength(1);
  });

  // Session expiry is an MQTT 5 feature: only Mosquitto can show a session that ends at disconnect.
  it.skipIf(mosquittoBinary() === null)('subscribes again after reconnecting to a broker that kept no session', async () => {
    const prefix = uniqueTopicPrefix('vehicle-yard');
    let client: MqttClient | undefined;
    const sessions: boolean[] = [];
    let onReading: (payload: string) => void = () => {};
    const c = connection({
      brokerOverrides: { sessionExpiryS: 0 },
      subscriptions: [{ filter: `${prefix}/#`, qos: 1 }],
      onMessage: (_topic, payload) => onReading(payload.toString()),
      connectClient: (url: string, options: IClientOptions) => (client = mqtt.connect(url, options)),
    });
    c.on('connect', ({ sessionPresent }) => sessions.push(sessionPresent));
    const firstSubscription = nextEvent(c, 'subscribed');
    await c.start();
    await firstSubscription;
    const resubscribed = nextEvent(c, 'subscribed');
    client?.stream.destroy();
    await resubscribed;
    const reading = new Promise<string>((resolve) => (onReading = resolve));
    observer.publish(`${prefix}/tug-05/position`, 'after', { qos: 1 });
    expect(await reading).toBe('after');
    expect(sessions).toEqual([false, false]);
  });

  it('does not subscribe again when the broker kept the session', async () => {
    const prefix = uniqueTopicPrefix('vehicle-yard');
    let client: MqttClient | undefined;
    let subscriptions = 0;
    let onReading: (payload: string) => void = () => {};
    const c = connection({
      subscriptions: [{ filter: `${prefix}/#`, qos: 1 }],
      onMessage: (_topic, payload) => onReading(payload.toString()),
      connectClient: (url: string, options: IClientOptions) => (client = mqtt.connect(url, options)),
    });
    c.on('subscribed', () => (subscriptions += 1));
    const firstSubscription = nextEvent(c, 'subscribed');
    await c.start();
    await firstSubscription;
    const reconnected = new Promise<boolean>((resolve) => c.once('connect', ({ sessionPresent }) => resolve(sessionPresent)));
    client?.stream.destroy();
    expect(await reconnected).toBe(true);
    const reading = new Promise<string>((resolve) => (onReading = resolve));
    observer.publish(`${prefix}/tug-06/position`, 'kept', { qos: 1 });
    expect(await reading).toBe('kept');
    expect(subscriptions).toBe(1);
  });

  it('rejects start() when stopped before the first connection', async () => {
    const c = connection({ brokerOverrides: { url: 'mqtt://127.0.0.1:1' } });
    const started = c.start();
    await c.stop({ finalStatus: true });
    await expect(started).rejects.toThrow(/stopped before it connected/);
  });
});
