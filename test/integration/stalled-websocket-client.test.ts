import { randomBytes } from 'node:crypto';
import { existsSync } from 'node:fs';
import { connect, type Socket } from 'node:net';
import type { MqttClient } from 'mqtt';
import WebSocket from 'ws';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, within, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { publishReadings } from './estimate-feed.js';
import type { TankName } from './tank-farm-fixture.js';

/**
 * A tank's temperature profile in 32 layers: a probe in the top layer starts the track, and a
 * sensor of the mean over all layers couples every layer to every other, so the covariance is
 * dense. With the covariance included each estimate is about 25 KB, and the thousands of
 * estimates of this test are over 100 MB that a server buffering everything for a stalled
 * client would have to hold.
 */
const LAYERS = Array.from({ length: 32 }, (_, i) => `layer_${String(i + 1).padStart(2, '0')}`);
const PRIOR_MEAN = LAYERS.map((_, i) => 15 - 0.1 * i);
const PROFILE_MEAN = PRIOR_MEAN.reduce((a, b) => a + b, 0) / LAYERS.length;
const PROFILE_ESTIMATOR = {
  name: 'profile',
  model: { type: 'random-walk', states: LAYERS, q: 1e-4 },
  filter: { kind: 'kf' },
  prior: { mean: Object.fromEntries(LAYERS.map((l, i) => [l, PRIOR_MEAN[i]])), defaultSigma: 2 },
  history: { maxEntries: 16 },
  publish: { includeCovariance: true },
  sensors: {
    top: {
      topic: 'farm/{tank}/temperature',
      decode: { format: 'json', values: ['top_c'], time: 't' },
      measurement: { type: 'linear', reads: { layer_01: 1 }, sigma: 0.05 },
    },
    mean: {
      topic: 'farm/{tank}/mean-temperature',
      decode: { format: 'json', values: ['mean_c'], time: 't' },
      measurement: { type: 'linear', reads: Object.fromEntries(LAYERS.map((l) => [l, 1 / LAYERS.length])), sigma: 0.05 },
    },
  },
};
const TANKS: readonly TankName[] = ['tank-a', 'tank-b', 'tank-c'];
/**
 * Readings per batch. The next batch goes out once every estimate of this one has reached both
 * the healthy WebSocket client and an MQTT subscriber, so traffic flows without a backlog piling
 * up in the daemon's MQTT outgoing queue (bounded by message count, not bytes), which would
 * swamp the RSS figure with memory that has nothing to do with the stalled client.
 */
const BATCH = 250;
const WARM_UP_BATCHES = 2;
const BATCHES = 20;
const RSS_GROWTH_LIMIT_BYTES = 64 * 1024 * 1024;

const hasProc = existsSync('/proc/self/status');
if (!hasProc) console.warn('no /proc: skipping the stalled WebSocket client test, which reads the daemon\'s RSS there');

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let publisher: MqttClient | undefined;
let mqttSubscriber: MqttClient | undefined;
let stalled: StalledClient | undefined;
let healthy: WebSocket | undefined;
const startS = Math.floor(Date.now() / 1000) - 300;

type Reading = { topic: string; payload: string; tS: number; entity: TankName };

/** Readings `from`..`to`-1 round-robin over the tanks, 10 ms apart, alternately the top layer and the mean. */
function readings(from: number, to: number): Reading[] {
  const out: Reading[] = [];
  for (let i = from; i < to; i++) {
    const entity = TANKS[i % TANKS.length]!;
    const tS = Math.round((startS + i * 0.01) * 1000) / 1000;
    const drift = 0.01 * Math.sin(i / 50);
    // Each tank's first reading is from the top probe, which can start a track; then they alternate.
    const top = i < TANKS.length || i % 2 === 0;
    const payload = top
      ? JSON.stringify({ top_c: Math.round((PRIOR_MEAN[0]! + drift) * 1e5) / 1e5, t: tS })
      : JSON.stringify({ mean_c: Math.round((PROFILE_MEAN + drift) * 1e5) / 1e5, t: tS });
    out.push({ entity, tS, topic: `farm/${entity}/${top ? 'temperature' : 'mean-temperature'}`, payload });
  }
  return out;
}

const ESTIMATE_HEAD = /"entity":"([^"]+)","kind":"filtered","t":([^,]+),/;

/**
 * The newest estimate time seen per tank and the number of estimates, read from the head of
 * each payload only: parsing thousands of 25 KB estimates in full would load the test process
 * more than the daemon.
 */
class LatestEstimates {
  readonly latestS = new Map<string, number>();
  count = 0;
  largestBytes = 0;
  private readonly waiters = new Set<() => void>();

  /** Takes the start of one payload (or frame) and its full length in bytes. */
  see(head: string, bytes: number): void {
    const m = ESTIMATE_HEAD.exec(head);
    if (m === null) return;
    this.count += 1;
    this.largestBytes = Math.max(this.largestBytes, bytes);
    this.latestS.set(m[1]!, Number(m[2]));
    for (const w of [...this.waiters]) w();
  }

  /** Resolves once, for every tank, the estimate of its last reading in `batch` has been seen. */
  hasLatestOf(batch: readonly Reading[], what: string): Promise<void> {
    const wanted = new Map(TANKS.map((tank) => [tank, batch.filter((r) => r.entity === tank).at(-1)!.tS]));
    const done = (): boolean => [...wanted].every(([tank, tS]) => this.latestS.get(tank) === tS);
    let waiter: (() => void) | undefined;
    const found = new Promise<void>((resolve) => {
      waiter = () => {
        if (done()) resolve();
      };
      this.waiters.add(waiter);
      waiter();
    });
    return within(found, 60_000, () => `${what}: the estimates of ${JSON.stringify([...wanted])}; seen ${JSON.stringify([...this.latestS])}`)
      .finally(() => this.waiters.delete(waiter!));
  }
}

const viaWebSocket = new LatestEstimates();
const viaMqtt = new LatestEstimates();

/**
 * A WebSocket client on a bare socket: it completes the upgrade, subscribes, reads until the
 * snapshot has arrived, then stops reading (the socket is paused), so the kernel buffers fill
 * and the server's writes back up. resume() reads again and decodes the frames that arrive.
 */
class StalledClient {
  readonly frames = new LatestEstimates();
  private buffered = Buffer.alloc(0);

  private constructor(readonly socket: Socket) {}

  static async open(port: number, path: string): Promise<StalledClient> {
    const socket = connect(port, '127.0.0.1');
    await new Promise<void>((resolve, reject) => {
      socket.once('connect', resolve);
      socket.once('error', reject);
    });
    socket.write(
      `GET ${path} HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n` +
        `Sec-WebSocket-Key: ${randomBytes(16).toString('base64')}\r\nSec-WebSocket-Version: 13\r\n\r\n`,
    );
    const client = new StalledClient(socket);
    await client.readUntil('HTTP/1.1 101');
    // A masked text frame (clients must mask, RFC 6455 §5.3) with the subscribe request.
    const payload = Buffer.from(JSON.stringify({ op: 'subscribe', estimators: ['profile'] }));
    const mask = randomBytes(4);
    for (let i = 0; i < payload.length; i++) payload[i]! ^= mask[i % 4]!;
    socket.write(Buffer.concat([Buffer.from([0x81, 0x80 | payload.length]), mask, payload]));
    await client.readUntil('"type":"snapshot"');
    socket.pause();
    client.buffered = Buffer.alloc(0);
    return client;
  }

  /** Reads again, from now on decoding every text frame (server frames are unmasked). */
  resume(): void {
    this.socket.on('data', (chunk: Buffer) => {
      this.buffered = Buffer.concat([this.buffered, chunk]);
      for (;;) {
        const b = this.buffered;
        if (b.length < 2) return;
        const short = b[1]! & 0x7f;
        const headerLength = short === 126 ? 4 : short === 127 ? 10 : 2;
        if (b.length < headerLength) return;
        const length = short === 126 ? b.readUInt16BE(2) : short === 127 ? Number(b.readBigUInt64BE(2)) : short;
        if (b.length < headerLength + length) return;
        if ((b[0]! & 0x0f) === 0x1) this.frames.see(b.subarray(headerLength, headerLength + 200).toString('utf8'), length);
        this.buffered = b.subarray(headerLength + length);
      }
    });
    this.socket.resume();
  }

  private readUntil(text: string): Promise<void> {
    let onData: ((chunk: Buffer) => void) | undefined;
    const seen = new Promise<void>((resolve) => {
      onData = (chunk: Buffer): void => {
        this.buffered = Buffer.concat([this.buffered, chunk]);
        if (this.buffered.includes(text)) resolve();
      };
      this.socket.on('data', onData);
    });
    return within(seen, 10_000, () => `"${text}" from the server; got ${this.buffered.toString('latin1').slice(0, 300)}`)
      .finally(() => this.socket.off('data', onData!));
  }
}

/** Sends one batch and waits until its estimates have reached both the WebSocket client and the MQTT subscriber. */
async function sendBatch(index: number): Promise<void> {
  const batch = readings(index * BATCH, (index + 1) * BATCH);
  await publishReadings(publisher!, batch);
  await viaWebSocket.hasLatestOf(batch, `batch ${index} on the healthy WebSocket client`);
  await viaMqtt.hasLatestOf(batch, `batch ${index} on MQTT`);
}

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [PROFILE_ESTIMATOR] } });
  publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  mqttSubscriber = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  mqttSubscriber.on('message', (_topic, payload) => viaMqtt.see(payload.subarray(0, 200).toString('utf8'), payload.length));
  await mqttSubscriber.subscribeAsync('statecast/profile/+/estimate', { qos: 0 });
  healthy = new WebSocket(daemon.wsUrl);
  healthy.on('message', (data) => {
    const frame = data as Buffer;
    viaWebSocket.see(frame.subarray(0, 200).toString('utf8'), frame.length);
  });
  await within(new Promise((resolve, reject) => {
    healthy!.once('open', resolve);
    healthy!.once('error', reject);
  }), 10_000, () => 'the healthy WebSocket client to connect');
  healthy.send(JSON.stringify({ op: 'subscribe', estimators: ['profile'] }));
});

afterAll(async () => {
  stalled?.socket.destroy();
  healthy?.terminate();
  await endRawClient(mqttSubscriber);
  await endRawClient(publisher);
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe.skipIf(!hasProc)('daemon process: a stalled WebSocket client', () => {
  let rssBefore = 0;
  let rssAfter = 0;

  beforeAll(async () => {
    stalled = await StalledClient.open(daemon.httpPort, daemon.config.http.websocket.path);
    for (let i = 0; i < WARM_UP_BATCHES; i++) await sendBatch(i);
    rssBefore = daemon.rssBytes();
    for (let i = WARM_UP_BATCHES; i < BATCHES; i++) await sendBatch(i);
    rssAfter = daemon.rssBytes();
  }, 180_000);

  it('holds the daemon\'s RSS growth under 64 MB through thousands of 25 KB estimates', () => {
    expect(viaMqtt.largestBytes).toBeGreaterThan(20_000);
    expect(rssAfter - rssBefore, `RSS ${rssBefore} → ${rssAfter} bytes`).toBeLessThan(RSS_GROWTH_LIMIT_BYTES);
  });

  it('keeps serving the other WebSocket client, MQTT and HTTP', async () => {
    expect(viaWebSocket.count).toBeGreaterThan(0);
    expect(viaMqtt.count).toBe(BATCHES * BATCH);
    expect((await daemon.get('/readyz')).status).toBe(200);
    const tracks = await daemon.getJson<{ tracks: unknown[] }>('/api/v1/tracks');
    expect(tracks.body.tracks).toHaveLength(TANKS.length);
  });

  it('gives the stalled client, once it reads again, the newest estimate of each tank after far fewer frames than were produced', async () => {
    stalled!.resume();
    await stalled!.frames.hasLatestOf(readings((BATCHES - 1) * BATCH, BATCHES * BATCH), 'the stalled client after resuming');
    expect(stalled!.frames.count).toBeLessThan((BATCHES - WARM_UP_BATCHES) * BATCH / 2);
  });
});
