import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { firstReadingTimeS, reading, readingCounts, tanksConfig, tanksEstimator } from '../faults/fault-fixtures.js';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { metricSum, startSoakDaemon, waitUntil, type SoakDaemon } from '../helpers/soak-daemon.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the oversized input tests');

const MAX_PAYLOAD_BYTES = 1024;
const MAX_WS_FRAME_BYTES = 4096;

let broker: TestMosquitto | null = null;
let daemon: SoakDaemon | null = null;
let publisher: MqttClient | undefined;

beforeAll(async () => {
  if (!hasMosquitto) return;
  broker = await startMosquitto();
  if (broker === null) throw new Error('mosquitto disappeared');
  const estimator = tanksEstimator();
  const sensors = estimator['sensors'] as { level: { decode: Record<string, unknown> } };
  daemon = await startSoakDaemon({
    config: tanksConfig(broker.url, {
      http: { websocket: { maxPayloadBytes: MAX_WS_FRAME_BYTES } },
      estimators: [{ ...estimator, sensors: { level: { ...sensors.level, decode: { ...sensors.level.decode, maxBytes: MAX_PAYLOAD_BYTES } } } }],
    }),
  });
  await daemon.waitReady();
  publisher = await connectRawClient(broker.url, { protocolVersion: 5 });
});

afterAll(async () => {
  await endRawClient(publisher);
  await daemon?.stop();
  await broker?.stop();
});

async function tooLarge(d: SoakDaemon): Promise<number> {
  return metricSum(await d.metrics(), 'statecast_measurements_rejected_total', { estimator: 'tanks', reason: 'too-large' });
}

function openClient(url: string): Promise<WebSocket> {
  const ws = new WebSocket(url);
  return new Promise((resolve, reject) => {
    ws.once('open', () => resolve(ws));
    ws.once('error', reject);
  });
}

describe.skipIf(!hasMosquitto)('hostile input against the daemon: oversized messages', () => {
  it(`refuses MQTT payloads past maxBytes (${MAX_PAYLOAD_BYTES}) as too-large and still takes the next reading`, async () => {
    const d = daemon!;
    const t0S = firstReadingTimeS();
    const { topic, payload } = reading(0, t0S);
    // Valid JSON with the right fields, padded past the limit: only its size is wrong.
    const padded = payload.replace('{', `{"pad":"${'x'.repeat(MAX_PAYLOAD_BYTES)}",`);
    const huge = payload.replace('{', `{"pad":"${'x'.repeat(4 * 1024 * 1024)}",`);
    for (const p of [padded, huge]) await publisher!.publishAsync(topic, p, { qos: 1 });
    await waitUntil(async () => (await tooLarge(d)) === 2, 'two too-large refusals');

    const before = await readingCounts(d);
    await publisher!.publishAsync(topic, payload, { qos: 1 });
    await waitUntil(async () => (await readingCounts(d)).accepted === before.accepted + 1, 'the next reading to be accepted');
    expect(d.running).toBe(true);
  });

  it(`closes a WebSocket client that sends a frame past ${MAX_WS_FRAME_BYTES} bytes with 1009, and serves the others`, async () => {
    const d = daemon!;
    const bystander = await openClient(d.wsUrl);
    const offender = await openClient(d.wsUrl);
    try {
      const closed = new Promise<number>((resolve) => offender.once('close', (code) => resolve(code)));
      offender.on('error', () => {});
      offender.send(JSON.stringify({ op: 'ping', id: 'x'.repeat(2 * MAX_WS_FRAME_BYTES) }));
      expect(await closed).toBe(1009);

      const pong = new Promise<string>((resolve) => bystander.on('message', (data) => {
        if (String(data).includes('"pong"')) resolve(String(data));
      }));
      bystander.send(JSON.stringify({ op: 'ping', id: 7 }));
      expect(JSON.parse(await pong)).toEqual({ type: 'pong', id: 7 });
    } finally {
      bystander.terminate();
      offender.terminate();
    }
  });
});
