import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { EstimateStreamServer } from '../../../src/adapters/ws/estimate-stream-server.js';
import { FakeEngineView, startHttpServer, TestClient } from './ws-test-kit.js';

let view: FakeEngineView;
let http: Awaited<ReturnType<typeof startHttpServer>>;
let stream: EstimateStreamServer;
let client: TestClient;

const accepted = (entity: string, nis: number, late = false) => ({
  estimator: 'tanks', sensor: 'level', entity, late, latencyS: 0.02, tS: 1_767_225_600, nis,
  values: new Float64Array([2.31]), sequence: 7,
});

beforeEach(async () => {
  view = new FakeEngineView();
  http = await startHttpServer();
  stream = new EstimateStreamServer({ httpServer: http.server, view });
  await stream.start();
  client = await TestClient.open(`ws://127.0.0.1:${http.port}/ws`);
  await client.next();
});

afterEach(async () => {
  client.ws.terminate();
  await stream.stop();
  await http.close();
});

async function subscribe(request: Record<string, unknown>): Promise<void> {
  client.send({ op: 'subscribe', ...request });
  expect((await client.next()).type).toBe('subscribed');
  expect((await client.next()).type).toBe('snapshot');
}

describe('measurement frames', () => {
  it('pushes each measurement outcome of a matching track when asked', async () => {
    await subscribe({ entities: ['tank-a'], measurements: true });
    view.events.emit('measurement:accepted', accepted('tank-b', 0.5));
    view.events.emit('measurement:accepted', accepted('tank-a', 0.5, true));
    view.events.emit('measurement:rejected', {
      estimator: 'tanks', sensor: 'level', entity: 'tank-a', topic: 'farm/tank-a/level', reason: 'gate',
      tS: 1_767_225_601, nis: 40, sequence: 8, values: new Float64Array([2.9]),
    });
    expect(await client.next()).toEqual({
      type: 'measurement',
      data: { estimator: 'tanks', entity: 'tank-a', sensor: 'level', t: 1_767_225_600, values: [2.31], nis: 0.5, verdict: 'late-applied' },
    });
    expect(await client.next()).toEqual({
      type: 'measurement',
      data: { estimator: 'tanks', entity: 'tank-a', sensor: 'level', t: 1_767_225_601, values: [2.9], nis: 40, verdict: 'gate' },
    });
  });

  it('reports the initializing measurement with a null NIS', async () => {
    await subscribe({ measurements: true });
    view.events.emit('measurement:accepted', accepted('tank-a', Number.NaN));
    const m = await client.next();
    expect(m['data']).toMatchObject({ nis: null, verdict: 'initialized' });
  });

  it('sends no measurement frames to a client that did not ask for them', async () => {
    await subscribe({ kinds: [] });
    view.events.emit('measurement:accepted', accepted('tank-a', 0.5));
    expect(await client.sync()).toEqual([]);
  });

  it('refuses a measurements flag that is not a boolean', async () => {
    client.send({ op: 'subscribe', measurements: 'yes' });
    expect(await client.next()).toMatchObject({ type: 'error', message: 'measurements: expected true or false' });
  });
});
