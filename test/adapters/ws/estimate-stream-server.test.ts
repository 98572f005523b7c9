import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { EstimateStreamServer } from '../../../src/adapters/ws/estimate-stream-server.js';
import type { HealthChange } from '../../../src/engine/health-change.js';
import { FakeEngineView, payloadFor, refusedStatus, startHttpServer, TestClient } from './ws-test-kit.js';

let view: FakeEngineView;
let http: Awaited<ReturnType<typeof startHttpServer>>;
let stream: EstimateStreamServer;
let url: string;
const open: TestClient[] = [];

async function connect(): Promise<TestClient> {
  const client = await TestClient.open(url);
  open.push(client);
  return client;
}

beforeEach(async () => {
  view = new FakeEngineView();
  view.latest = [
    payloadFor('tank-a', 'filtered', 100),
    payloadFor('tank-a', 'smoothed', 90),
    payloadFor('tank-b', 'filtered', 100),
    payloadFor('tug-01', 'filtered', 100),
    payloadFor('tug-01', 'predicted', 101),
    payloadFor('tug-12', 'filtered', 100),
  ];
  http = await startHttpServer();
  stream = new EstimateStreamServer({ httpServer: http.server, view });
  await stream.start();
  url = `ws://127.0.0.1:${http.port}/ws`;
});

afterEach(async () => {
  for (const client of open.splice(0)) client.ws.terminate();
  await stream.stop();
  await http.close();
});

function entitiesOf(snapshot: Record<string, unknown>): string[] {
  const estimates = snapshot['estimates'] as { entity: string; kind: string }[];
  return estimates.map((e) => `${e.entity}/${e.kind}`);
}

describe('EstimateStreamServer', () => {
  it('greets a new client with hello and the protocol version', async () => {
    const client = await connect();
    expect(await client.next()).toEqual({ type: 'hello', version: 1 });
  });

  it('refuses an upgrade on another path with 404', async () => {
    expect(await refusedStatus(`ws://127.0.0.1:${http.port}/other`)).toBe(404);
  });

  it('pushes nothing before the client subscribes', async () => {
    const client = await connect();
    await client.next();
    view.emitEstimate(payloadFor('tug-01', 'filtered', 200));
    expect(await client.sync()).toEqual([]);
  });

  it('acknowledges a subscribe with its id, then sends the matching snapshot', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe', id: 'q1', estimators: ['yard'], entities: ['tug-*'], kinds: ['filtered'] });
    expect(await client.next()).toEqual({ type: 'subscribed', id: 'q1' });
    const snapshot = await client.next();
    expect(snapshot.type).toBe('snapshot');
    expect(entitiesOf(snapshot)).toEqual(['tug-01/filtered', 'tug-12/filtered']);
  });

  it('filters the snapshot by exact entity and kind', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe', entities: ['tank-a'], kinds: ['smoothed', 'filtered'] });
    await client.next();
    expect(entitiesOf(await client.next())).toEqual(['tank-a/filtered', 'tank-a/smoothed']);
  });

  it('sends the estimate payload as a JSON object inside each update', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe', entities: ['tug-01'], kinds: ['filtered'] });
    await client.next();
    await client.next();
    const update = payloadFor('tug-01', 'filtered', 300);
    view.emitEstimate(payloadFor('tug-12', 'filtered', 300));
    view.emitEstimate(update);
    expect(await client.next()).toEqual({ type: 'estimate', data: JSON.parse(update.payload) });
  });

  it('replaces the previous subscription on a new subscribe', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe', entities: ['tank-a'] });
    client.send({ op: 'subscribe', entities: ['tank-b'] });
    await client.sync();
    view.emitEstimate(payloadFor('tank-a', 'filtered', 400));
    view.emitEstimate(payloadFor('tank-b', 'filtered', 400));
    const received = await client.sync();
    expect(received.map((m) => (m['data'] as { entity: string }).entity)).toEqual(['tank-b']);
  });

  it('pushes health changes to a client subscribed to health', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe', entities: ['tank-*'], kinds: [], health: true });
    await client.sync();
    const change: HealthChange = {
      estimator: 'tanks', entity: 'tank-c', sensor: 'level-radar', from: 'ok', to: 'degraded', reasons: ['nis-high'], tS: 500,
    };
    view.events.emit('health:changed', { ...change, entity: 'tug-01' });
    view.events.emit('health:changed', change);
    expect(await client.next()).toEqual({ type: 'health', data: change });
  });

  it('sends no health changes to a client that did not ask for them', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe' });
    await client.sync();
    view.events.emit('health:changed', {
      estimator: 'tanks', entity: 'tank-a', sensor: null, from: 'ok', to: 'failed', reasons: ['silent'], tS: 1,
    });
    expect(await client.sync()).toEqual([]);
  });

  it('answers a bad JSON frame with an error and stays open', async () => {
    const client = await connect();
    await client.next();
    client.ws.send('{"op":');
    expect(await client.next()).toMatchObject({ type: 'error', message: expect.stringMatching(/^bad JSON/) });
    expect(await client.sync()).toEqual([]);
  });

  it('answers an unknown op with an error naming it', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'unsubscribe', id: 5 });
    expect(await client.next()).toEqual({
      type: 'error', id: 5, message: 'op: unknown op "unsubscribe"; expected "subscribe" or "ping"',
    });
  });

  it('answers a bad glob with an error naming the field and keeps the old subscription', async () => {
    const client = await connect();
    await client.next();
    client.send({ op: 'subscribe', entities: ['tank-a'], kinds: ['filtered'] });
    await client.sync();
    client.send({ op: 'subscribe', entities: ['tug-[01]'] });
    expect(await client.next()).toMatchObject({ type: 'error', message: expect.stringMatching(/^entities\[0\]: /) });
    const update = payloadFor('tank-a', 'filtered', 600);
    view.emitEstimate(update);
    expect(await client.next()).toEqual({ type: 'estimate', data: JSON.parse(update.payload) });
  });

  it('answers a binary frame with an error', async () => {
    const client = await connect();
    await client.next();
    client.ws.send(Buffer.from('{"op":"ping"}'), { binary: true });
    expect(await client.next()).toMatchObject({ type: 'error', message: expect.stringMatching(/binary/) });
  });

  it('counts connected clients in stats', async () => {
    const a = await connect();
    await a.next();
    const b = await connect();
    await b.next();
    expect(stream.stats().clients).toBe(2);
    await a.close();
    // The server sees the close a moment after the client does: round-trip until it has.
    for (let i = 0; i < 100 && stream.stats().clients > 1; i++) await b.sync();
    expect(stream.stats().clients).toBe(1);
  });
});
