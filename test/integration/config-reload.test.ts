import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TrackDetail } from '../../src/engine/engine-view.js';
import type { ConfigIssue } from '../../src/config/config-error.js';
import type { EstimatorConfig } from '../../src/config/config-schema.js';
import type { DeepReadonly } from '../../src/config/deep-freeze.js';
import { parseConfig } from '../../src/config/load-config.js';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, type DaemonLogLine, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { sampleValue } from '../helpers/prometheus-text.js';
import { EstimateFeed, expectEstimateEquals, publishReadings } from './estimate-feed.js';
import { ReferenceEstimator, tankEstimator, tankReading, tankReadings, type ReferenceStep, type TankReading } from './tank-farm-fixture.js';

/**
 * NIS of the outliers sent below: beyond the 1-degree-of-freedom chi-square gate at 0.99
 * (6.63) but inside the one at 0.999 (10.83), so only the reloaded gate lets them in.
 */
const OUTLIER_NIS = 8.5;

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let publisher: MqttClient | undefined;
let feed: EstimateFeed | undefined;

const startS = Math.floor(Date.now() / 1000) - 200;
const normal = tankReadings({ entity: 'tank-a', count: 30, startS, levelEvery: 1 });
const oldEstimator = tankEstimator({ gate: { probability: 0.99 } });
const newEstimator = tankEstimator({ gate: { probability: 0.999 } });

function estimatorConfig(raw: Record<string, unknown>): DeepReadonly<EstimatorConfig> {
  const result = parseConfig({ estimators: [raw] }, {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.config.estimators[0]!;
}

/**
 * The core under each gate: the old one sees everything the daemon saw before the reload, its
 * rejections included; the new one only what the daemon accepted, so both hold the daemon's state.
 */
const oldCore = new ReferenceEstimator(estimatorConfig(oldEstimator));
const newCore = new ReferenceEstimator(estimatorConfig(newEstimator));

/** A level reading of tank-a at tS whose NIS against the core's prediction is OUTLIER_NIS. */
function outlierAt(tS: number, seq: number): TankReading {
  const track = oldCore.track('tank-a');
  const n = track.x.length;
  const x = new Float64Array(n);
  const P = new Float64Array(n * n);
  if (!track.predictInto(tS, x, P)) throw new Error('the core cannot predict to the outlier time');
  const s = P[0]! + 0.02 ** 2; // level variance plus the level sensor's σ²
  return tankReading('tank-a', 'level', x[0]! + Math.sqrt(OUTLIER_NIS * s), tS, seq);
}

/** Feeds both cores a reading both gates accept; returns the old core's step. */
function coresTake(reading: TankReading): ReferenceStep {
  newCore.ingest(reading);
  return oldCore.ingest(reading);
}

async function trackDetail(): Promise<TrackDetail> {
  return (await daemon.getJson<TrackDetail>('/api/v1/tracks/tanks/tank-a')).body;
}

async function gateRejections(): Promise<number> {
  return sampleValue(await daemon.metrics(), 'statecast_measurements_rejected_total', { estimator: 'tanks', sensor: 'level', reason: 'gate' }) ?? 0;
}

/** Sends SIGHUP and resolves with the first log line from then on whose msg includes `text`. */
async function reload(text: string): Promise<DaemonLogLine> {
  const mark = daemon.logs.length;
  daemon.signal('SIGHUP');
  return daemon.waitForLog(text, { after: mark });
}

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [oldEstimator] } });
  feed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  const first = normal.slice(0, 10);
  await publishReadings(publisher, first);
  for (const reading of first) coresTake(reading);
  await feed.waitForCount('tank-a', first.length);
});

afterAll(async () => {
  await feed?.close();
  await endRawClient(publisher);
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: SIGHUP', () => {
  it('logs every issue of an invalid config by path and keeps the old one', async () => {
    await daemon.writeConfig({ estimators: [tankEstimator({ gate: { probability: 2 }, colour: 'red' })] });
    const line = await reload('SIGHUP: the new configuration is invalid; keeping the old one');
    const issues = line['issues'] as ConfigIssue[];
    expect(issues.map((i) => i.path)).toContain('estimators[0].gate.probability');
    expect(issues.some((i) => i.message.includes('colour'))).toBe(true);
  });

  it('logs a YAML syntax error with its line and keeps the old config', async () => {
    await daemon.writeConfigText('estimators:\n  - name: tanks\n     model: [\n');
    const line = await reload('SIGHUP: the new configuration is invalid; keeping the old one');
    const issues = line['issues'] as ConfigIssue[];
    expect(issues[0]?.message).toMatch(/YAML syntax error at line \d+/);
  });

  it('keeps processing with the old config: its gate still rejects an outlier and later readings match the core', async () => {
    const gateBefore = await gateRejections();
    const next = normal[11]!;
    const outlier = outlierAt(normal[10]!.tS, 1000);
    // The daemon's track sees the rejection too; the new-gate core is spared it, as it would accept it.
    expect(oldCore.ingest(outlier).verdict).toBe('gate');
    await publishReadings(publisher!, [outlier, next]);
    const step = coresTake(next);
    const estimate = await feed!.waitFor((e) => e.t === next.tS, 15_000, `the estimate of seq ${next.seq}`);

    expect(feed!.of('tank-a').some((e) => e.t === outlier.tS)).toBe(false);
    expect(await gateRejections()).toBe(gateBefore + 1);
    expectEstimateEquals(estimate, step);
  });

  it('applies a valid config with a changed gate probability, logs that it reloaded, and keeps the track', async () => {
    const before = await trackDetail();
    await daemon.writeConfig({ estimators: [newEstimator] });
    const line = await reload('configuration reloaded');
    expect(line['tracksKept']).toBe(1);
    expect(line['tracksDropped']).toBe(0);
    const after = await trackDetail();
    expect(after.tS).toBe(before.tS);
    expect(after.state).toEqual(before.state);
    expect(after.covariance).toEqual(before.covariance);
  });

  it('gates with the reloaded probability: the same kind of outlier now updates the track as the core does', async () => {
    const outlier = outlierAt(normal[12]!.tS, 1001);
    expect(oldCore.ingest(outlier).verdict).toBe('gate');
    const step = newCore.ingest(outlier);
    expect(step.verdict).toBe('applied');
    await publishReadings(publisher!, [outlier]);
    const estimate = await feed!.waitFor((e) => e.t === outlier.tS, 15_000, 'the estimate of the outlier');
    expectEstimateEquals(estimate, step);
  });
});
