import type { MqttClient } from 'mqtt';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { createMqttConnection, type MqttConnection } from '../../../src/adapters/mqtt/mqtt-connection.js';
import { connectRawClient, endRawClient, publishSequence, testBrokerConfig, uniqueTopicPrefix } from '../../helpers/mqtt-fixtures.js';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../../helpers/mosquitto.js';
import { createRecordingLogger } from '../../helpers/recording-logger.js';

const COUNT = 500;
const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the MQTT 5 session tests');

let mosquitto: TestMosquitto | null = null;
let publisher: MqttClient | undefined;
const running: MqttConnection[] = [];

beforeAll(async () => {
  if (!hasMosquitto) return;
  mosquitto = await startMosquitto();
  if (mosquitto !== null) publisher = await connectRawClient(mosquitto.url, { protocolVersion: 5 });
});
afterEach(async () => {
  await Promise.all(running.splice(0).map((c) => c.stop({ finalStatus: false })));
});
afterAll(async () => {
  await endRawClient(publisher);
  await mosquitto?.stop();
});

/**
 * Runs the scenario: the daemon subscribes, goes away, 500 sequenced QoS 1 readings are
 * published, then a retained end marker; the daemon comes back with the same client id and
 * collects until the marker arrives. The marker comes after the readings in a kept session,
 * and by itself (as a retained message on a new subscription) in a lost one.
 */
async function sequencesAfterRestart(sessionExpiryS: number): Promise<Set<number>> {
  const url = (mosquitto as TestMosquitto).url;
  const prefix = uniqueTopicPrefix('tank-farm');
  const clientId = `statecast-${prefix.replaceAll('/', '-')}`;
  const seen = new Set<number>();
  let onEnd: () => void = () => {};
  const ended = new Promise<void>((resolve) => (onEnd = resolve));
  const make = (): MqttConnection => {
    const c = createMqttConnection({
      broker: testBrokerConfig(url, { sessionExpiryS }),
      clientId,
      logger: createRecordingLogger(),
      subscriptions: [{ filter: `${prefix}/#`, qos: 1 }],
      onMessage: (topic, payload) => {
        if (topic.endsWith('/end')) onEnd();
        else seen.add((JSON.parse(payload.toString()) as { seq: number }).seq);
      },
    });
    running.push(c);
    return c;
  };

  const first = make();
  const subscribed = new Promise<void>((resolve) => first.on('subscribed', resolve));
  await first.start();
  await subscribed;
  await first.stop({ finalStatus: true });

  const p = publisher as MqttClient;
  await publishSequence(p, `${prefix}/tank-a/level`, COUNT);
  await p.publishAsync(`${prefix}/end`, 'end', { qos: 1, retain: true });

  await make().start();
  await ended;
  return seen;
}

describe.skipIf(!hasMosquitto)('persistent session (MQTT 5, Mosquitto)', () => {
  it('delivers every QoS 1 message published while the daemon was away', async () => {
    const seen = await sequencesAfterRestart(86400);
    expect(seen.size).toBe(COUNT);
    expect([...seen].sort((a, b) => a - b).at(-1)).toBe(COUNT - 1);
  });

  it('loses those messages when the session does not outlive the connection', async () => {
    // Same scenario with session expiry 0: the broker discards the session at disconnect.
    // This proves the scenario above can tell a kept session from a lost one.
    const seen = await sequencesAfterRestart(0);
    expect(seen.size).toBe(0);
  });
});
