import { randomUUID } from 'node:crypto';
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import type { ResolvedBrokerConfig } from '../../src/adapters/mqtt/mqtt-client-options.js';
import type { MqttConnection } from '../../src/adapters/mqtt/mqtt-connection.js';
import { brokerSchema } from '../../src/config/service-schema.js';

/** Broker settings for tests: the schema's defaults with quick reconnects; `overrides.url` wins over `url`. */
export function testBrokerConfig(url: string, overrides: Record<string, unknown> = {}): ResolvedBrokerConfig {
  const parsed = brokerSchema.parse({ url, reconnectMinMs: 20, reconnectMaxMs: 400, ...overrides });
  return { ...parsed, url: parsed.url ?? url };
}

/** A topic prefix no other test uses, e.g. `tank-farm/3f2a.../`. */
export function uniqueTopicPrefix(scenario: 'tank-farm' | 'vehicle-yard'): string {
  return `${scenario}/${randomUUID().slice(0, 8)}`;
}

/** A plain mqtt.js client (the test's side of the broker), resolved once connected. */
export async function connectRawClient(url: string, options: IClientOptions = {}): Promise<MqttClient> {
  const client = mqtt.connect(url, { reconnectPeriod: 50, connectTimeout: 5000, ...options });
  await new Promise<void>((resolve, reject) => {
    client.once('connect', () => resolve());
    client.once('error', reject);
  });
  return client;
}

/** Ends a raw client without leaving its socket open. */
export function endRawClient(client: MqttClient | undefined): Promise<void> {
  if (client === undefined) return Promise.resolve();
  return new Promise((resolve) => client.end(true, () => resolve()));
}

/** Publishes `count` QoS 1 messages `{"seq":i}` to `topic`, at most `maxOutstanding` unacknowledged at once. */
export async function publishSequence(client: MqttClient, topic: string, count: number, maxOutstanding = 200): Promise<void> {
  for (let start = 0; start < count; start += maxOutstanding) {
    const batch: Promise<unknown>[] = [];
    for (let seq = start; seq < Math.min(count, start + maxOutstanding); seq += 1) {
      batch.push(client.publishAsync(topic, JSON.stringify({ seq }), { qos: 1 }));
    }
    await Promise.all(batch);
  }
}

/** Resolves with the payload of the next message on `topic` that `match` accepts. */
export function nextMessage(client: MqttClient, topic: string, match: (payload: string) => boolean = () => true): Promise<string> {
  return new Promise((resolve) => {
    const onMessage = (t: string, payload: Buffer): void => {
      if (t !== topic || !match(payload.toString())) return;
      client.off('message', onMessage);
      resolve(payload.toString());
    };
    client.on('message', onMessage);
  });
}

/** Resolves the next time `connection` emits `event` (a connection is not a Node EventEmitter). */
export function nextEvent(connection: MqttConnection, event: 'connect' | 'subscribed' | 'disconnect'): Promise<void> {
  return new Promise((resolve) => connection.once(event, () => resolve()));
}
