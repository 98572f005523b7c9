import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TrackDetail } from '../../src/engine/engine-view.js';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { sampleValue, samplesOf } from '../helpers/prometheus-text.js';
import { EstimateFeed, publishReadings } from './estimate-feed.js';
import { tankEstimator, tankReading, tankReadings } from './tank-farm-fixture.js';

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let publisher: MqttClient | undefined;
let feed: EstimateFeed | undefined;

const nowS = Math.floor(Date.now() / 1000);
const LEVEL = 'farm/tank-a/level';

/** Each bad payload on tank-a's level topic, with the reason the daemon must count it under. */
const BAD_PAYLOADS: readonly { what: string; payload: string | Buffer; reason: string }[] = [
  { what: 'bytes that are not UTF-8', payload: Buffer.from([0xff, 0xfe, 0x80, 0x00]), reason: 'not-utf8' },
  { what: 'garbage text', payload: 'level=4.2;t=now', reason: 'not-json' },
  { what: 'an unterminated object', payload: '{"level_m": 4.2, "t": ', reason: 'not-json' },
  { what: 'a NaN literal', payload: `{"level_m": NaN, "t": ${nowS - 5}, "seq": 900}`, reason: 'not-json' },
  { what: 'the text "NaN" as the value', payload: JSON.stringify({ level_m: 'NaN', t: nowS - 5, seq: 901 }), reason: 'wrong-type' },
  { what: 'a number written as text', payload: JSON.stringify({ level_m: '4.2', t: nowS - 5, seq: 902 }), reason: 'wrong-type' },
  { what: 'a level that is an object', payload: JSON.stringify({ level_m: { m: 4.2 }, t: nowS - 5, seq: 903 }), reason: 'wrong-type' },
  { what: 'no level field', payload: JSON.stringify({ head_m: 4.2, t: nowS - 5, seq: 904 }), reason: 'missing-field' },
  { what: 'a level that overflows', payload: `{"level_m": 1e999, "t": ${nowS - 5}, "seq": 905}`, reason: 'non-finite' },
  { what: 'a payload above maxBytes', payload: JSON.stringify({ level_m: 4.2, t: nowS - 5, seq: 906, pad: 'x'.repeat(20_000) }), reason: 'too-large' },
  { what: 'a time stamp in the year 5138', payload: JSON.stringify({ level_m: 4.2, t: 99_999_999_999, seq: 907 }), reason: 'bad-time' },
  { what: 'a negative time stamp', payload: JSON.stringify({ level_m: 4.2, t: -5, seq: 908 }), reason: 'bad-time' },
  { what: 'a time stamp that is not ISO 8601', payload: JSON.stringify({ level_m: 4.2, t: 'yesterday', seq: 909 }), reason: 'bad-time' },
  { what: 'a negative sequence number', payload: JSON.stringify({ level_m: 4.2, t: nowS - 5, seq: -1 }), reason: 'bad-sequence' },
  { what: 'a time stamp a day ahead of the clock', payload: JSON.stringify({ level_m: 4.2, t: nowS + 86_400, seq: 910 }), reason: 'future' },
  { what: 'a time stamp before the track was started', payload: JSON.stringify({ level_m: 4.2, t: nowS - 3600, seq: 911 }), reason: 'too-late' },
];

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [tankEstimator()] } });
  feed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
});

afterAll(async () => {
  await feed?.close();
  await endRawClient(publisher);
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: malformed payloads', () => {
  let before: TrackDetail;
  let estimatesBefore = 0;

  beforeAll(async () => {
    // A track for tank-a, then every bad payload, then a good reading of tank-b: the daemon
    // handles messages in arrival order, so tank-b's estimate means the bad ones were handled.
    const good = tankReadings({ entity: 'tank-a', count: 10, startS: nowS - 100 });
    await publishReadings(publisher!, good);
    await feed!.waitForCount('tank-a', good.length);
    before = (await daemon.getJson<TrackDetail>('/api/v1/tracks/tanks/tank-a')).body;
    estimatesBefore = feed!.of('tank-a').length;
    await publishReadings(publisher!, BAD_PAYLOADS.map((b) => ({ topic: LEVEL, payload: b.payload })));
    await publishReadings(publisher!, [tankReading('tank-b', 'level', 3.1, nowS - 1, 1)]);
    await feed!.waitForCount('tank-b', 1);
  });

  it('counts each bad payload under its reason in statecast_measurements_rejected_total', async () => {
    const metrics = await daemon.metrics();
    const expected = new Map<string, number>();
    for (const b of BAD_PAYLOADS) expected.set(b.reason, (expected.get(b.reason) ?? 0) + 1);
    const counted = new Map<string, number>();
    for (const s of samplesOf(metrics, 'statecast_measurements_rejected_total', { estimator: 'tanks', sensor: 'level' })) {
      if (s.value > 0) counted.set(s.labels['reason']!, s.value);
    }
    expect(Object.fromEntries(counted)).toEqual(Object.fromEntries(expected));
  });

  it('counts every message it received as accepted or rejected', async () => {
    const metrics = await daemon.metrics();
    const received = sampleValue(metrics, 'statecast_measurements_received_total', { estimator: 'tanks', sensor: 'level' });
    const accepted = samplesOf(metrics, 'statecast_measurements_accepted_total', { estimator: 'tanks', sensor: 'level' })
      .reduce((sum, s) => sum + s.value, 0);
    const rejected = samplesOf(metrics, 'statecast_measurements_rejected_total', { estimator: 'tanks', sensor: 'level' })
      .reduce((sum, s) => sum + s.value, 0);
    expect(rejected).toBe(BAD_PAYLOADS.length);
    expect(received).toBe(accepted + rejected);
  });

  it('leaves the track untouched: same state, covariance and time as before the bad payloads', async () => {
    const after = (await daemon.getJson<TrackDetail>('/api/v1/tracks/tanks/tank-a')).body;
    expect(after.initialized).toBe(true);
    expect(after.tS).toBe(before.tS);
    expect(after.state).toEqual(before.state);
    expect(after.covariance).toEqual(before.covariance);
  });

  it('publishes no estimate for a bad payload', () => {
    expect(feed!.of('tank-a')).toHaveLength(estimatesBefore);
  });

  it('keeps running and answering probes', async () => {
    expect(daemon.logs.some((l) => l.level >= 50)).toBe(false);
    expect((await daemon.get('/healthz')).status).toBe(200);
    expect((await daemon.get('/readyz')).status).toBe(200);
  });
});
