import { afterEach, describe, expect, it } from 'vitest';
import { DAEMON_METRIC_NAMES, isDaemonSeriesName } from '../../../src/adapters/metrics/daemon-metrics.js';
import { acceptedEvent, rejectedEvent } from '../../helpers/fake-engine-view.js';
import { sampleValue } from '../../helpers/prometheus-text.js';
import { setupMetrics, stopAllMetrics } from './metrics-fixture.js';

const setup = setupMetrics;
afterEach(stopAllMetrics);

describe('createDaemonMetrics', () => {
  it('exposes text that parses strictly with every family prefixed statecast_', async () => {
    const { scrape } = setup();
    await expect(scrape()).resolves.toBeInstanceOf(Map);
  });

  // The per-entity families are written as text beside prom-client's, not registered on it, so
  // the names are read from a scrape rather than from getMetricsAsArray().
  it('exposes every name of DAEMON_METRIC_NAMES when the WebSocket and MQTT drop callbacks are given', async () => {
    const { scrape } = setup({ wsClients: () => 3, wsDroppedTotal: () => 7, mqttDroppedTotal: () => 2 });
    const names = [...(await scrape()).keys()];
    expect(names).toEqual(expect.arrayContaining([...DAEMON_METRIC_NAMES]));
  });

  it('exposes no name outside DAEMON_METRIC_NAMES except the prefixed process metrics', async () => {
    const { scrape } = setup({ wsClients: () => 3, wsDroppedTotal: () => 7, mqttDroppedTotal: () => 2 });
    const own = [...(await scrape()).keys()].filter((n) => !/^statecast_(process_|nodejs_)/.test(n));
    expect(own.sort()).toEqual([...DAEMON_METRIC_NAMES].sort());
  });

  it('names every counter with _total', async () => {
    const { scrape } = setup({ wsDroppedTotal: () => 0 });
    const counters = [...(await scrape()).values()].filter((f) => f.type === 'counter').map((f) => f.name);
    expect(counters.filter((n) => !n.endsWith('_total'))).toEqual([]);
  });

  it('counts an accepted measurement as received and accepted with its late flag', async () => {
    const { view, scrape } = setup();
    view.events.emit('measurement:accepted', acceptedEvent({ estimator: 'yard', sensor: 'gnss', entity: 'tug-01', late: true }));
    const f = await scrape();
    expect(sampleValue(f, 'statecast_measurements_received_total', { estimator: 'yard', sensor: 'gnss' })).toBe(1);
    expect(sampleValue(f, 'statecast_measurements_accepted_total', { estimator: 'yard', sensor: 'gnss', late: 'true' })).toBe(1);
  });

  it('observes processing latency into the buckets from 1 ms to 60 s', async () => {
    const { view, scrape } = setup();
    for (const latencyS of [0.0005, 0.2, 45]) {
      view.events.emit('measurement:accepted', acceptedEvent({ latencyS }));
    }
    const f = await scrape();
    const bucket = (le: string) => sampleValue(f, 'statecast_processing_latency_seconds_bucket', { estimator: 'tanks', le });
    expect([bucket('0.001'), bucket('0.25'), bucket('30'), bucket('60')]).toEqual([1, 2, 2, 3]);
    expect(sampleValue(f, 'statecast_processing_latency_seconds_count', { estimator: 'tanks' })).toBe(3);
  });

  it('records a negative latency (clock offset) as zero so the sum never shrinks', async () => {
    const { view, scrape } = setup();
    view.events.emit('measurement:accepted', acceptedEvent({ latencyS: -0.3 }));
    expect(sampleValue(await scrape(), 'statecast_processing_latency_seconds_sum', { estimator: 'tanks' })).toBe(0);
  });

  it('counts a rejection by reason and as received', async () => {
    const { view, scrape } = setup();
    view.events.emit('measurement:rejected', rejectedEvent({ reason: 'gate' }));
    view.events.emit('measurement:rejected', rejectedEvent({ entity: null, reason: 'not-json' }));
    const f = await scrape();
    expect(sampleValue(f, 'statecast_measurements_rejected_total', { estimator: 'tanks', sensor: 'level', reason: 'gate' })).toBe(1);
    expect(sampleValue(f, 'statecast_measurements_rejected_total', { estimator: 'tanks', sensor: 'level', reason: 'not-json' })).toBe(1);
    expect(sampleValue(f, 'statecast_measurements_received_total', { estimator: 'tanks', sensor: 'level' })).toBe(2);
  });

  it('labels a reason outside the closed sets as other', async () => {
    const { view, scrape } = setup();
    const reason = 'free text' as unknown as 'gate';
    view.events.emit('measurement:rejected', rejectedEvent({ reason }));
    const f = await scrape();
    expect(sampleValue(f, 'statecast_measurements_rejected_total', { estimator: 'tanks', sensor: 'level', reason: 'other' })).toBe(1);
  });

  it('counts published estimates by kind', async () => {
    const { view, scrape } = setup();
    const base = { estimator: 'yard', entity: 'tug-02', topic: 'statecast/yard/tug-02', payload: '{}', tS: 1 };
    view.events.emit('estimate', { ...base, kind: 'filtered' });
    view.events.emit('estimate', { ...base, kind: 'smoothed' });
    view.events.emit('estimate', { ...base, kind: 'smoothed' });
    const f = await scrape();
    expect(sampleValue(f, 'statecast_estimates_published_total', { estimator: 'yard', kind: 'smoothed' })).toBe(2);
  });

  it('counts health transitions by new state and first reason, "none" on recovery', async () => {
    const { view, scrape } = setup();
    const base = { estimator: 'tanks', entity: 'tank-b', sensor: 'pressure', tS: 1 };
    view.events.emit('health:changed', { ...base, from: 'ok', to: 'degraded', reasons: ['gate-rate', 'nis-high'] });
    view.events.emit('health:changed', { ...base, from: 'degraded', to: 'ok', reasons: [] });
    const f = await scrape();
    expect(sampleValue(f, 'statecast_health_transitions_total', { estimator: 'tanks', to: 'degraded', reason: 'gate-rate' })).toBe(1);
    expect(sampleValue(f, 'statecast_health_transitions_total', { estimator: 'tanks', to: 'ok', reason: 'none' })).toBe(1);
  });

  it('subscribes once however often start() is called', async () => {
    const { view, metrics, scrape } = setup();
    metrics.start();
    view.events.emit('estimate', { estimator: 'yard', entity: 'tug-03', kind: 'filtered', topic: 't', payload: '{}', tS: 1 });
    expect(sampleValue(await scrape(), 'statecast_estimates_published_total', { estimator: 'yard', kind: 'filtered' })).toBe(1);
  });

  it('stops following events after stop()', async () => {
    const { view, metrics, scrape } = setup();
    metrics.stop();
    metrics.stop();
    view.events.emit('estimate', { estimator: 'yard', entity: 'tug-03', kind: 'filtered', topic: 't', payload: '{}', tS: 1 });
    expect(view.events.has('estimate')).toBe(false);
    expect(sampleValue(await scrape(), 'statecast_estimates_published_total', { estimator: 'yard', kind: 'filtered' })).toBeUndefined();
  });
});

describe('isDaemonSeriesName', () => {
  it('accepts metric names and the histogram series, and refuses anything else', () => {
    expect(isDaemonSeriesName('statecast_trace_p')).toBe(true);
    expect(isDaemonSeriesName('statecast_processing_latency_seconds_bucket')).toBe(true);
    expect(isDaemonSeriesName('statecast_trace_p_bucket')).toBe(false);
    expect(isDaemonSeriesName('statecast_trace')).toBe(false);
  });
});

