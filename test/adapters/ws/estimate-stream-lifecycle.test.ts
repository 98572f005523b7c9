import { afterEach, describe, expect, it } from 'vitest';
import { EstimateStreamServer } from '../../../src/adapters/ws/estimate-stream-server.js';
import { EstimateStreamOptionsError } from '../../../src/adapters/ws/estimate-stream-options.js';
import { RawWsClient } from './raw-ws-client.js';
import { FakeEngineView, startHttpServer, TestClient } from './ws-test-kit.js';

const cleanups: (() => Promise<unknown>)[] = [];

afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup();
});

async function rig(options: ConstructorParameters<typeof EstimateStreamServer>[1] = {}) {
  const view = new FakeEngineView();
  const http = await startHttpServer();
  const stream = new EstimateStreamServer({ httpServer: http.server, view }, options);
  cleanups.push(() => http.close(), () => stream.stop());
  return { view, http, stream, url: `ws://127.0.0.1:${http.port}/ws` };
}

describe('EstimateStreamServer lifecycle', () => {
  it('attaches once however often start is called', async () => {
    const { http, stream, url } = await rig();
    await stream.start();
    await stream.start();
    expect(http.server.listenerCount('upgrade')).toBe(1);
    const client = await TestClient.open(url);
    cleanups.push(async () => client.ws.terminate());
    expect(await client.next()).toEqual({ type: 'hello', version: 1 });
  });

  it('closes every client with 1001 on stop', async () => {
    const { stream, url } = await rig();
    await stream.start();
    const a = await TestClient.open(url);
    const b = await TestClient.open(url);
    await Promise.all([a.next(), b.next()]);
    await stream.stop();
    expect(await Promise.all([a.closed, b.closed])).toEqual([1001, 1001]);
  });

  it('detaches from the HTTP server and the engine events on stop', async () => {
    const { http, stream, view } = await rig();
    await stream.start();
    await stream.stop();
    expect(http.server.listenerCount('upgrade')).toBe(0);
    expect(view.events.has('estimate')).toBe(false);
    expect(view.events.has('health:changed')).toBe(false);
  });

  it('returns from a second stop without error', async () => {
    const { stream } = await rig();
    await stream.start();
    await Promise.all([stream.stop(), stream.stop()]);
    await expect(stream.stop()).resolves.toBeUndefined();
  });

  it('cuts off a client that does not answer the close handshake', async () => {
    const { http, stream } = await rig({ closeGraceMs: 50 });
    await stream.start();
    const raw = await RawWsClient.open(http.port, '/ws');
    cleanups.push(async () => raw.socket.destroy());
    await raw.waitFor((text) => text.startsWith('{"type":"hello"'));
    const gone = new Promise((resolve) => raw.socket.once('close', resolve));
    // The raw client never answers a close frame, so only the grace timeout ends it.
    await stream.stop();
    await gone;
    expect(stream.stats().clients).toBe(0);
  });

  it('serves again after a stop and a new start', async () => {
    const { stream, url } = await rig();
    await stream.start();
    await stream.stop();
    await stream.start();
    const client = await TestClient.open(url);
    cleanups.push(async () => client.ws.terminate());
    expect(await client.next()).toEqual({ type: 'hello', version: 1 });
  });

  it('refuses options it cannot use, naming the option', async () => {
    const { http, view } = await rig();
    const make = (options: object) => () => new EstimateStreamServer({ httpServer: http.server, view }, options);
    expect(make({ maxQueuedPerClient: 0 })).toThrow(EstimateStreamOptionsError);
    expect(make({ heartbeatMs: 1.5 })).toThrow(/^heartbeatMs: expected a positive integer/);
    expect(make({ path: 'ws' })).toThrow(/^path: /);
    expect(make({ token: '' })).toThrow(/^token: /);
    expect(make({ allowedOrigins: [''] })).toThrow(/^allowedOrigins: /);
  });
});
