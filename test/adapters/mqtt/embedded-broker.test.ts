import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { startEmbeddedBroker, type EmbeddedBroker } from '../../../src/adapters/broker/embedded-broker.js';
import { createMqttConnection, type MqttConnection } from '../../../src/adapters/mqtt/mqtt-connection.js';
import { nextEvent, testBrokerConfig, uniqueTopicPrefix } from '../../helpers/mqtt-fixtures.js';
import { createRecordingLogger } from '../../helpers/recording-logger.js';

let broker: EmbeddedBroker;
const connections: MqttConnection[] = [];

beforeAll(async () => {
  broker = await startEmbeddedBroker({ port: 0 });
});
afterEach(async () => {
  await Promise.all(connections.splice(0).map((c) => c.stop({ finalStatus: false })));
});
afterAll(async () => {
  await broker?.stop();
});

function connection(protocolVersion: 4 | 5, extra: { filter?: string; onMessage?: (topic: string, payload: Buffer) => void } = {}): MqttConnection {
  const c = createMqttConnection({
    broker: testBrokerConfig(broker.url, { protocolVersion }),
    clientId: `statecast-embedded-${Math.random().toString(16).slice(2, 10)}`,
    logger: createRecordingLogger(),
    subscriptions: extra.filter === undefined ? [] : [{ filter: extra.filter, qos: 1 }],
    onMessage: extra.onMessage ?? (() => {}),
  });
  connections.push(c);
  return c;
}

describe('embedded broker', () => {
  it('reports a loopback URL and protocol version 4', () => {
    expect(broker.url).toBe(`mqtt://127.0.0.1:${broker.port}`);
    expect(broker.protocolVersion).toBe(4);
  });

  it('carries messages between two connections speaking MQTT 3.1.1', async () => {
    const prefix = uniqueTopicPrefix('tank-farm');
    const received = new Promise<string>((resolve) => {
      const daemon = connection(4, { filter: `${prefix}/+/level`, onMessage: (_t, payload) => resolve(payload.toString()) });
      const subscribed = nextEvent(daemon, 'subscribed');
      void daemon.start();
      void subscribed.then(async () => {
        const sensor = connection(4);
        await sensor.start();
        sensor.publish(`${prefix}/tank-c/level`, '{"levelM":4.75}', { qos: 1 });
      });
    });
    expect(await received).toBe('{"levelM":4.75}');
  });

  it('refuses an MQTT 5 connection, and start() says to use protocol version 4', async () => {
    await expect(connection(5).start()).rejects.toThrow(/refused the connection.*set broker\.protocolVersion to 4/);
  });

  it('names host, port and the config key when the port is already in use', async () => {
    const attempt = startEmbeddedBroker({ host: '127.0.0.1', port: broker.port });
    await expect(attempt).rejects.toMatchObject({ code: 'EMBEDDED_BROKER_PORT_IN_USE' });
    await expect(attempt).rejects.toThrow(new RegExp(`127\\.0\\.0\\.1:${broker.port}.*embeddedBroker\\.port`));
  });

  it('stops more than once without failing', async () => {
    const spare = await startEmbeddedBroker({ port: 0 });
    await spare.stop();
    await expect(spare.stop()).resolves.toBeUndefined();
  });
});
