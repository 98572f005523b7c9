import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { EstimateFeed, publishReadings, type EstimatePayload } from './estimate-feed.js';
import { tankEstimator, tankReadings } from './tank-farm-fixture.js';
import { WsFeed, type WsFrame } from './ws-feed.js';

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let publisher: MqttClient | undefined;
let mqttFeed: EstimateFeed | undefined;
const sockets: WsFeed[] = [];

const startS = Math.floor(Date.now() / 1000) - 200;
const tankA = tankReadings({ entity: 'tank-a', count: 40, startS });
const tankB = tankReadings({ entity: 'tank-b', count: 40, startS, seed: 5 });
let sentA = 0;
let sentB = 0;

/** Publishes tank-a's next reading and resolves with the estimate the daemon published on MQTT for it. */
async function nextTankA(): Promise<EstimatePayload> {
  const reading = tankA[sentA++]!;
  await publishReadings(publisher!, [reading]);
  return mqttFeed!.waitFor((e) => e.entity === 'tank-a' && e.t === reading.tS, 15_000, `the estimate of tank-a seq ${reading.seq}`);
}

async function openFeed(): Promise<WsFeed> {
  const feed = await WsFeed.open(daemon.wsUrl);
  sockets.push(feed);
  return feed;
}

const isEstimateOf = (entity: string, tS: number) => (f: WsFrame): boolean =>
  f.type === 'estimate' && (f['data'] as EstimatePayload).entity === entity && (f['data'] as EstimatePayload).t === tS;

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [tankEstimator()] } });
  mqttFeed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  for (let i = 0; i < 3; i++) await nextTankA();
});

afterAll(async () => {
  await Promise.all(sockets.map((s) => s.close()));
  await mqttFeed?.close();
  await endRawClient(publisher);
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: WebSocket estimate stream', () => {
  it('greets a new client with hello, protocol version 1', async () => {
    const feed = await openFeed();
    const hello = await feed.waitFor(() => true, { what: 'the first frame' });
    expect(hello).toEqual({ type: 'hello', version: 1 });
  });

  it('pushes no estimate to a client that has not subscribed', async () => {
    const feed = await openFeed();
    await feed.waitFor((f) => f.type === 'hello');
    await nextTankA();
    // The pong is queued behind anything the server had for this client when the ping came.
    feed.send({ op: 'ping', id: 'after-estimate' });
    await feed.waitFor((f) => f.type === 'pong');
    expect(feed.frames.map((f) => f.type)).toEqual(['hello', 'pong']);
  });

  it('answers a subscribe with subscribed, echoing its id, then a snapshot of the latest matching estimate', async () => {
    const latest = await nextTankA();
    const feed = await openFeed();
    await feed.waitFor((f) => f.type === 'hello');
    feed.send({ op: 'subscribe', id: 'control-room-1', estimators: ['tanks'], entities: ['tank-a'] });
    const subscribed = await feed.waitFor((f) => f.type === 'subscribed');
    const snapshot = await feed.waitFor((f) => f.type === 'snapshot');

    expect(subscribed).toEqual({ type: 'subscribed', id: 'control-room-1' });
    expect(feed.frames.indexOf(snapshot)).toBe(feed.frames.indexOf(subscribed) + 1);
    expect(snapshot['estimates']).toEqual([latest]);
  });

  it('pushes each new estimate of a subscribed tank, equal to the one published on MQTT', async () => {
    const feed = await openFeed();
    feed.send({ op: 'subscribe', estimators: ['tanks'], entities: ['tank-a'] });
    await feed.waitFor((f) => f.type === 'snapshot');
    for (let i = 0; i < 5; i++) {
      const published = await nextTankA();
      const pushed = await feed.waitFor(isEstimateOf('tank-a', published.t), { what: `the estimate at t=${published.t}` });
      expect(pushed['data']).toEqual(published);
    }
  });

  it('pushes nothing for a tank outside the subscription', async () => {
    const feed = await openFeed();
    feed.send({ op: 'subscribe', entities: ['tank-a'] });
    await feed.waitFor((f) => f.type === 'snapshot');
    const mark = feed.frames.length;
    const b = tankB[sentB++]!;
    await publishReadings(publisher!, [b]);
    await mqttFeed!.waitFor((e) => e.entity === 'tank-b' && e.t === b.tS);
    const a = await nextTankA();
    await feed.waitFor(isEstimateOf('tank-a', a.t), { after: mark });
    const entities = feed.frames.slice(mark).map((f) => (f['data'] as EstimatePayload | undefined)?.entity);
    expect(entities).toEqual(['tank-a']);
  });
});
