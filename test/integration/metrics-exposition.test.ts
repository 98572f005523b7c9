import type { MqttClient } from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DAEMON_METRIC_NAMES, PROCESSING_LATENCY_BUCKETS_S } from '../../src/adapters/metrics/daemon-metrics.js';
import { cleanupDaemons, startBrokerForDaemon, startDaemon, type DaemonProcess } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { TestMosquitto } from '../helpers/mosquitto.js';
import { parsePrometheusText, sampleValue, samplesOf, type PromFamily } from '../helpers/prometheus-text.js';
import { EstimateFeed, publishReadings } from './estimate-feed.js';
import { tankEstimator, tankReadings } from './tank-farm-fixture.js';

let mosquitto: TestMosquitto | null = null;
let daemon: DaemonProcess;
let publisher: MqttClient | undefined;
let feed: EstimateFeed | undefined;
let text = '';
let families: Map<string, PromFamily>;
let sentAtS = 0;

/**
 * Readings stamped 45 s before they are sent, so each one's processing latency lies between the
 * 30 s and 60 s bucket bounds unless delivery takes longer than 15 s.
 */
const READINGS = tankReadings({ entity: 'tank-a', count: 12, startS: Math.floor(Date.now() / 1000) - 45, stepS: 0.05 });

beforeAll(async () => {
  mosquitto = await startBrokerForDaemon();
  daemon = await startDaemon({ ...(mosquitto === null ? {} : { brokerUrl: mosquitto.url }), config: { estimators: [tankEstimator()] } });
  feed = await EstimateFeed.open(daemon.brokerUrl, daemon.protocolVersion, 'statecast/tanks/+/estimate');
  publisher = await connectRawClient(daemon.brokerUrl, { protocolVersion: daemon.protocolVersion });
  sentAtS = Date.now() / 1000;
  await publishReadings(publisher, READINGS);
  await feed.waitForCount('tank-a', READINGS.length);
  const res = await daemon.get('/metrics');
  expect(res.status).toBe(200);
  text = res.body;
  families = parsePrometheusText(text, { requirePrefix: 'statecast_' });
});

afterAll(async () => {
  await feed?.close();
  await endRawClient(publisher);
  await cleanupDaemons();
  await mosquitto?.stop();
});

describe('daemon process: /metrics', () => {
  it('parses as Prometheus text in which every family is named statecast_*', () => {
    expect(() => parsePrometheusText(text, { requirePrefix: 'statecast_' })).not.toThrow();
    expect(families.size).toBeGreaterThan(DAEMON_METRIC_NAMES.length);
  });

  it('has a HELP line for every family', () => {
    const withoutHelp = [...families.values()].filter((f) => f.help === null || f.help === '').map((f) => f.name);
    expect(withoutHelp).toEqual([]);
  });

  it('exposes every metric the daemon names', () => {
    const missing = DAEMON_METRIC_NAMES.filter((name) => !families.has(name));
    expect(missing).toEqual([]);
  });

  it('names every counter with _total', () => {
    const counters = [...families.values()].filter((f) => f.type === 'counter');
    expect(counters.length).toBeGreaterThan(0);
    expect(counters.map((f) => f.name).filter((name) => !name.endsWith('_total'))).toEqual([]);
  });

  it('counts each accepted reading once in the accepted and received counters and publishes one estimate for it', () => {
    const accepted = samplesOf(families, 'statecast_measurements_accepted_total', { estimator: 'tanks' }).reduce((sum, s) => sum + s.value, 0);
    const received = samplesOf(families, 'statecast_measurements_received_total', { estimator: 'tanks' }).reduce((sum, s) => sum + s.value, 0);
    expect(accepted).toBe(READINGS.length);
    expect(received).toBe(READINGS.length);
    expect(sampleValue(families, 'statecast_estimates_published_total', { estimator: 'tanks', kind: 'filtered' })).toBe(READINGS.length);
  });

  it('records each accepted reading in the latency histogram with the documented buckets', () => {
    const histogram = families.get('statecast_processing_latency_seconds');
    expect(histogram?.type).toBe('histogram');
    const buckets = samplesOf(families, 'statecast_processing_latency_seconds_bucket', { estimator: 'tanks' });
    expect(buckets.map((b) => b.labels['le'])).toEqual([...PROCESSING_LATENCY_BUCKETS_S.map(String), '+Inf']);
    const count = (le: string): number | undefined => buckets.find((b) => b.labels['le'] === le)?.value;
    expect(sampleValue(families, 'statecast_processing_latency_seconds_count', { estimator: 'tanks' })).toBe(READINGS.length);
    expect(count('30')).toBe(0);
    expect(count('60')).toBe(READINGS.length);
    // Each reading waited at least from its stamp until it was sent.
    const leastSumS = READINGS.reduce((sum, r) => sum + (sentAtS - r.tS), 0);
    expect(sampleValue(families, 'statecast_processing_latency_seconds_sum', { estimator: 'tanks' })).toBeGreaterThanOrEqual(leastSumS);
  });

  it('reports the broker connection and one track', () => {
    expect(sampleValue(families, 'statecast_broker_connected')).toBe(1);
    expect(sampleValue(families, 'statecast_tracks', { estimator: 'tanks' })).toBe(1);
  });
});
