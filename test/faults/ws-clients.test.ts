import type { MqttClient } from 'mqtt';
import { afterEach, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { RawWsClient } from '../adapters/ws/raw-ws-client.js';
import { mosquittoBinary, startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { startSoakDaemon, waitUntil, type SoakDaemon } from '../helpers/soak-daemon.js';
import { TANKS, firstReadingTimeS, reading, readingCounts, tanksConfig } from './fault-fixtures.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the hostile WebSocket client fault test');

/** Enough estimates (about 300 bytes each) to fill a non-reading client's socket buffers several times. */
const COUNT = 30_000;

const cleanups: (() => Promise<unknown>)[] = [];
afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup().catch(() => undefined);
});

/** A client that reads everything and remembers the newest estimate time per entity. */
async function readingClient(url: string): Promise<{ ws: WebSocket; estimates: () => number; bytes: () => number; newestT: Map<string, number> }> {
  const ws = new WebSocket(url);
  let estimates = 0;
  let bytes = 0;
  const newestT = new Map<string, number>();
  ws.on('message', (data) => {
    const text = String(data);
    bytes += text.length;
    const message = JSON.parse(text) as { type: string; data?: { entity: string; t: number } };
    if (message.type !== 'estimate' || message.data === undefined) return;
    estimates += 1;
    newestT.set(message.data.entity, Math.max(newestT.get(message.data.entity) ?? -Infinity, message.data.t));
  });
  await new Promise<void>((resolve, reject) => {
    ws.once('open', () => resolve());
    ws.once('error', reject);
  });
  ws.send(JSON.stringify({ op: 'subscribe', estimators: ['tanks'] }));
  return { ws, estimates: () => estimates, bytes: () => bytes, newestT };
}

describe.skipIf(!hasMosquitto)('fault: hostile WebSocket clients', () => {
  it('keeps feeding a reading client while one client stalls and another floods requests (closed with 1008)', { timeout: 120_000 }, async () => {
    const broker: TestMosquitto | null = await startMosquitto();
    if (broker === null) throw new Error('mosquitto disappeared');
    cleanups.push(() => broker.stop());
    const daemon: SoakDaemon = await startSoakDaemon({ config: tanksConfig(broker.url) });
    cleanups.push(() => daemon.stop());
    await daemon.waitReady();
    const port = Number(new URL(daemon.wsUrl).port);

    // The stalled client completes the upgrade, subscribes, and then never reads again.
    const stalled = await RawWsClient.open(port, '/ws');
    cleanups.push(async () => stalled.socket.destroy());
    stalled.sendText(JSON.stringify({ op: 'subscribe', estimators: ['tanks'] }));
    await stalled.waitFor((text) => text.includes('"snapshot"'));
    stalled.socket.pause();
    const stalledBytesAtPause = stalled.socket.bytesRead;

    const good = await readingClient(daemon.wsUrl);
    cleanups.push(async () => good.ws.terminate());

    const publisher: MqttClient = await connectRawClient(broker.url, { protocolVersion: 5 });
    cleanups.push(() => endRawClient(publisher));
    const t0S = firstReadingTimeS();
    const publish = async (from: number, to: number): Promise<void> => {
      for (let start = from; start < to; start += 250) {
        const batch: Promise<unknown>[] = [];
        for (let seq = start; seq < Math.min(to, start + 250); seq++) {
          const { topic, payload } = reading(seq, t0S);
          batch.push(publisher.publishAsync(topic, payload, { qos: 1 }));
        }
        await Promise.all(batch);
      }
    };

    // During the first half, a client sends far more requests than its allowance of 50 a second.
    const firstHalf = publish(0, COUNT / 2);
    await waitUntil(() => good.estimates() >= 1000, 'the reading client to receive 1,000 estimates', 60_000);
    const flood = new WebSocket(daemon.wsUrl);
    cleanups.push(async () => flood.terminate());
    const floodClosed = new Promise<number>((resolve) => flood.once('close', (code) => resolve(code)));
    await new Promise<void>((resolve, reject) => {
      flood.once('open', () => resolve());
      flood.once('error', reject);
    });
    for (let i = 0; i < 500 && flood.readyState === WebSocket.OPEN; i++) flood.send(JSON.stringify({ op: 'subscribe', id: i }));
    expect(await floodClosed).toBe(1008);
    await firstHalf;
    const estimatesAfterFlood = good.estimates();

    // The second half starts after the flood was cut off; the stalled client is still there.
    await publish(COUNT / 2, COUNT);
    await waitUntil(async () => (await readingCounts(daemon)).accepted === COUNT, `all ${COUNT} readings to be accepted`, 60_000);
    // The newest estimate of every tank reaches the reading client: a slow neighbour may cost
    // it nothing, and coalescing never drops the latest value.
    const lastT = new Map<string, number>();
    for (let seq = COUNT - TANKS.length; seq < COUNT; seq++) {
      const { topic, payload } = reading(seq, t0S);
      lastT.set(topic.split('/')[1]!, (JSON.parse(payload) as { t: number }).t);
    }
    await waitUntil(() => TANKS.every((tank) => good.newestT.get(tank) === lastT.get(tank)), 'the newest estimate of each tank at the reading client', 30_000);
    expect(good.estimates()).toBeGreaterThan(estimatesAfterFlood);

    // The stalled client took (almost) nothing since it stopped reading, far less than the
    // megabytes the reading client received: its backlog stayed in its own queue.
    expect(stalled.socket.bytesRead - stalledBytesAtPause).toBeLessThan(256 * 1024);
    expect(good.bytes()).toBeGreaterThan(4 * 1024 * 1024);
    expect(daemon.running).toBe(true);
    expect((await daemon.get('/healthz')).status).toBe(200);
    console.log(`WebSocket: reading client ${good.estimates()} estimates / ${(good.bytes() / 1e6).toFixed(1)} MB; stalled client read ${stalled.socket.bytesRead - stalledBytesAtPause} bytes after pausing; flood closed with 1008`);
  });
});
