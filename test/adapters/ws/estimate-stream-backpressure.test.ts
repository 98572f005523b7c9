import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { afterEach, describe, expect, it } from 'vitest';
import { EstimateStreamServer } from '../../../src/adapters/ws/estimate-stream-server.js';
import type { EstimateStreamOptions } from '../../../src/adapters/ws/estimate-stream-options.js';
import { EstimateSerializer } from '../../../src/engine/estimate-message.js';
import { RawWsClient } from './raw-ws-client.js';
import { FakeEngineView, startHttpServer } from './ws-test-kit.js';

const ENTITIES = 50;
const ESTIMATES = 20_000;
const BATCH = 1000;
const HIGH_WATER_BYTES = 1024 * 1024;

/** A 6-state estimate with covariance (~850 bytes), so the flood is far larger than any buffer. */
const serializer = new EstimateSerializer('yard', ['e', 'n', 'u', 've', 'vn', 'vu'], true);
const covariance = new Float64Array(36).fill(0.123456789);

function entityOf(i: number): string {
  return `tug-${String(i % ENTITIES).padStart(2, '0')}`;
}

interface Rig {
  view: FakeEngineView;
  stream: EstimateStreamServer;
  raw: RawWsClient;
}

const cleanups: (() => Promise<unknown>)[] = [];

afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup();
});

/** A server with one raw client that subscribes to the yard and then stops reading. */
async function stalledRig(options: EstimateStreamOptions = {}): Promise<Rig> {
  const view = new FakeEngineView();
  const http = await startHttpServer();
  const stream = new EstimateStreamServer({ httpServer: http.server, view }, options);
  await stream.start();
  const raw = await RawWsClient.open(http.port, '/ws');
  cleanups.push(() => http.close(), () => stream.stop(), async () => raw.socket.destroy());
  raw.sendText(JSON.stringify({ op: 'subscribe', estimators: ['yard'] }));
  await raw.waitFor((text) => text.startsWith('{"type":"snapshot"'));
  raw.socket.pause();
  return { view, stream, raw };
}

/** Emits the flood in batches, yielding between them so the server's writes reach the socket. */
async function flood(rig: Rig, afterBatch: () => void = () => {}): Promise<void> {
  const x = new Float64Array(6);
  for (let i = 0; i < ESTIMATES; i++) {
    x[0] = i;
    const entity = entityOf(i);
    const payload = serializer.serialize(entity, 'filtered', i, x, covariance, 0, false, { state: 'ok', reasons: [] });
    rig.view.emitEstimate({ estimator: 'yard', entity, kind: 'filtered', payload });
    if (i % BATCH === BATCH - 1) {
      await new Promise((resolve) => setImmediate(resolve));
      afterBatch();
    }
  }
}

function clientStats(rig: Rig): { queued: number; bufferedBytes: number; dropped: number; coalesced: number } {
  const stats = rig.stream.stats().perClient[0];
  if (stats === undefined) throw new Error('the stalled client is gone');
  return stats;
}

describe('EstimateStreamServer with a stalled client', () => {
  it('keeps the queue within maxQueuedPerClient and the socket buffer within one frame of the high-water mark', async () => {
    const rig = await stalledRig();
    let maxQueued = 0;
    let maxBuffered = 0;
    await flood(rig, () => {
      const stats = clientStats(rig);
      maxQueued = Math.max(maxQueued, stats.queued);
      maxBuffered = Math.max(maxBuffered, stats.bufferedBytes);
    });
    expect(maxQueued).toBeGreaterThan(0);
    expect(maxQueued).toBeLessThanOrEqual(256);
    expect(maxBuffered).toBeLessThanOrEqual(HIGH_WATER_BYTES + 1024);
  });

  it('coalesces estimates of the same entity while the client stalls', async () => {
    const rig = await stalledRig();
    await flood(rig);
    expect(clientStats(rig).coalesced).toBeGreaterThan(0);
    expect(rig.stream.stats().coalesced).toBe(clientStats(rig).coalesced);
    expect(clientStats(rig).dropped).toBe(0);
  });

  it('drops and counts the oldest frames when the entities outnumber the queue', async () => {
    const rig = await stalledRig({ maxQueuedPerClient: 16 });
    let maxQueued = 0;
    await flood(rig, () => {
      maxQueued = Math.max(maxQueued, clientStats(rig).queued);
    });
    expect(maxQueued).toBe(16);
    expect(clientStats(rig).dropped).toBeGreaterThan(0);
    expect(rig.stream.stats().dropped).toBe(clientStats(rig).dropped);
  });

  it('delivers the latest estimate of every entity once the client reads again', async () => {
    const rig = await stalledRig();
    await flood(rig);
    const lastT = new Map<string, number>();
    let frames = 0;
    // The pong is queued behind every estimate still waiting, so it arrives last.
    const ended = new Promise<void>((resolve) => {
      rig.raw.onText((text) => {
        const message = JSON.parse(text) as { type: string; id?: string; data?: { entity: string; t: number } };
        if (message.type === 'pong' && message.id === 'end') resolve();
        if (message.type !== 'estimate' || message.data === undefined) return;
        frames++;
        lastT.set(message.data.entity, message.data.t);
      });
    });
    rig.raw.socket.resume();
    rig.raw.sendText('{"op":"ping","id":"end"}');
    await ended;
    expect(lastT.size).toBe(ENTITIES);
    for (let e = 0; e < ENTITIES; e++) expect(lastT.get(entityOf(e))).toBe(ESTIMATES - ENTITIES + e);
    expect(frames).toBeLessThan(ESTIMATES);
  });

  it('holds one snapshot for a stalled client that re-subscribes again and again', async () => {
    const rig = await stalledRig();
    rig.view.latest = Array.from({ length: ENTITIES }, (_, e) => ({
      estimator: 'yard', entity: entityOf(e), kind: 'filtered' as const, payload: `{"entity":"${entityOf(e)}"}`,
    }));
    await flood(rig);
    const readsBefore = rig.view.latestReads;
    for (let i = 0; i < 40; i++) rig.raw.sendText(`{"op":"subscribe","id":${i},"estimators":["yard"]}`);
    await rig.view.readsReached(readsBefore + 40);
    // 40 acknowledgements in order plus the newest snapshot; the queued estimates were superseded.
    expect(clientStats(rig).queued).toBe(41);
  });

  it('keeps heap and buffer growth bounded while the client stalls', async () => {
    setFlagsFromString('--expose-gc');
    const gc = runInNewContext('gc') as () => void;
    const rig = await stalledRig();
    const used = (): number => {
      gc();
      const memory = process.memoryUsage();
      return memory.heapUsed + memory.external;
    };
    const before = used();
    await flood(rig);
    const growthBytes = used() - before;
    // ~17 MB of frames went out; the bounds allow 1 MiB buffered plus 50 queued frames.
    expect(growthBytes).toBeLessThan(6 * 1024 * 1024);
  });
});
