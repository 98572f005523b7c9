import { afterEach, describe, expect, it } from 'vitest';
import { fakeSensor, fakeTrack } from '../../helpers/fake-engine-view.js';
import { sampleValue, samplesOf } from '../../helpers/prometheus-text.js';
import { setupMetrics, stopAllMetrics } from './metrics-fixture.js';

afterEach(stopAllMetrics);

describe('scrape-time gauges', () => {
  it('reports the track count of each configured estimator', async () => {
    const { scrape } = setupMetrics();
    const f = await scrape();
    expect(sampleValue(f, 'statecast_tracks', { estimator: 'tanks' })).toBe(2);
    expect(sampleValue(f, 'statecast_tracks', { estimator: 'yard' })).toBe(1);
  });

  it('reports the windowed NIS of each sensor of each track', async () => {
    const { view, scrape } = setupMetrics();
    view.tracks[0] = fakeTrack('tanks', 'tank-a', { sensors: [fakeSensor('level', { windowedNisMean: 3.4 })] });
    const f = await scrape();
    expect(sampleValue(f, 'statecast_windowed_nis', { estimator: 'tanks', entity: 'tank-a', sensor: 'level' })).toBe(3.4);
    expect(samplesOf(f, 'statecast_windowed_nis', { estimator: 'yard', entity: 'tug-01' })).toHaveLength(2);
  });

  it('reports the innovation ratio per component index', async () => {
    const { scrape } = setupMetrics();
    const f = await scrape();
    const labels = { estimator: 'yard', entity: 'tug-01', sensor: 'gnss' };
    expect(sampleValue(f, 'statecast_innovation_ratio', { ...labels, component: '0' })).toBe(0.3);
    expect(sampleValue(f, 'statecast_innovation_ratio', { ...labels, component: '1' })).toBe(-1.2);
  });

  it('reports trace P and coast seconds per track', async () => {
    const { view, scrape } = setupMetrics();
    view.tracks[2] = { ...view.tracks[2]!, coastS: 12.5 };
    const f = await scrape();
    expect(sampleValue(f, 'statecast_trace_p', { estimator: 'yard', entity: 'tug-01' })).toBe(2.5);
    expect(sampleValue(f, 'statecast_coast_seconds', { estimator: 'yard', entity: 'tug-01' })).toBe(12.5);
  });

  it('codes health as 0 ok, 1 degraded, 2 failed, with sensor="" for the track itself', async () => {
    const { scrape } = setupMetrics();
    const f = await scrape();
    expect(sampleValue(f, 'statecast_health_state', { estimator: 'tanks', entity: 'tank-a', sensor: '' })).toBe(0);
    expect(sampleValue(f, 'statecast_health_state', { estimator: 'tanks', entity: 'tank-b', sensor: '' })).toBe(1);
    expect(sampleValue(f, 'statecast_health_state', { estimator: 'yard', entity: 'tug-01', sensor: 'gnss' })).toBe(2);
  });

  it('leaves out non-finite figures instead of exposing NaN', async () => {
    const { view, scrape } = setupMetrics();
    view.tracks[0] = fakeTrack('tanks', 'tank-a', {
      initialized: false, traceP: Number.NaN, sensors: [fakeSensor('level', { windowedNisMean: Number.NaN })],
    });
    const f = await scrape();
    expect(samplesOf(f, 'statecast_trace_p', { entity: 'tank-a' })).toEqual([]);
    expect(samplesOf(f, 'statecast_windowed_nis', { entity: 'tank-a' })).toEqual([]);
  });

  it('drops every per-entity series of an evicted track at the next scrape', async () => {
    const { view, scrape } = setupMetrics();
    expect(samplesOf(await scrape(), 'statecast_trace_p', { entity: 'tug-01' })).toHaveLength(1);
    view.evict('yard', 'tug-01');
    const f = await scrape();
    const left = [...f.values()].flatMap((family) => family.samples).filter((s) => s.labels['entity'] === 'tug-01');
    expect(left).toEqual([]);
    expect(sampleValue(f, 'statecast_tracks', { estimator: 'yard' })).toBe(0);
  });

  it('escapes entity names so the exposition still parses', async () => {
    const { view, scrape } = setupMetrics();
    view.tracks.push(fakeTrack('tanks', 'tank-c "north"\\2'));
    const f = await scrape();
    expect(sampleValue(f, 'statecast_trace_p', { estimator: 'tanks', entity: 'tank-c "north"\\2' })).toBe(0.0004);
  });

  it('reads the track list once per scrape for all the per-entity gauges', async () => {
    const { view, registry } = setupMetrics();
    await registry.metrics();
    const before = view.listCalls;
    await registry.metrics();
    expect(view.listCalls - before).toBe(1);
  });

  it('exposes at most maxEntitiesPerEstimator entities per estimator, non-ok first, then by name', async () => {
    const { view, scrape } = setupMetrics({ maxEntitiesPerEstimator: 2 });
    view.tracks.push(fakeTrack('tanks', 'tank-0'), fakeTrack('tanks', 'tank-z', { health: { state: 'failed', reasons: ['stale'] } }));
    const f = await scrape();
    const entities = samplesOf(f, 'statecast_trace_p', { estimator: 'tanks' }).map((s) => s.labels['entity']);
    // tank-z failed, tank-b degraded; tank-0 and tank-a are ok and left out.
    expect(entities.sort()).toEqual(['tank-b', 'tank-z']);
    expect(sampleValue(f, 'statecast_metrics_entities_omitted', { estimator: 'tanks' })).toBe(2);
    expect(sampleValue(f, 'statecast_metrics_entities_omitted', { estimator: 'yard' })).toBe(0);
  });

  it('fills the cap by entity name among healthy entities', async () => {
    const { view, scrape } = setupMetrics({ maxEntitiesPerEstimator: 2 });
    view.tracks[1] = fakeTrack('tanks', 'tank-b');
    view.tracks.push(fakeTrack('tanks', 'tank-0'));
    const entities = samplesOf(await scrape(), 'statecast_health_state', { estimator: 'tanks', sensor: '' }).map((s) => s.labels['entity']);
    expect(entities.sort()).toEqual(['tank-0', 'tank-a']);
  });

  it('keeps HELP and TYPE of the per-entity families when the cap is 0', async () => {
    const { scrape } = setupMetrics({ maxEntitiesPerEstimator: 0 });
    const f = await scrape();
    expect(f.get('statecast_trace_p')?.type).toBe('gauge');
    expect(f.get('statecast_trace_p')?.samples).toEqual([]);
    expect(sampleValue(f, 'statecast_metrics_entities_omitted', { estimator: 'tanks' })).toBe(2);
  });

  it('gives the same per-entity samples through getMetricsAsJSON', async () => {
    const { registry, scrape } = setupMetrics();
    const text = samplesOf(await scrape(), 'statecast_innovation_ratio', {});
    const json = (await registry.getMetricsAsJSON()).find((m) => m.name === 'statecast_innovation_ratio');
    expect(json?.values.map((v) => ({ labels: v.labels, value: v.value }))).toEqual(text.map((s) => ({ labels: s.labels, value: s.value })));
  });

  it('follows the broker connection callback', async () => {
    const { scrape, broker } = setupMetrics();
    expect(sampleValue(await scrape(), 'statecast_broker_connected')).toBe(1);
    broker.connected = false;
    expect(sampleValue(await scrape(), 'statecast_broker_connected')).toBe(0);
  });

  it('reports WebSocket clients and drops from the callbacks it is given', async () => {
    const feed = { clients: 4, dropped: 9 };
    const { scrape } = setupMetrics({ wsClients: () => feed.clients, wsDroppedTotal: () => feed.dropped });
    await scrape();
    feed.dropped = 11;
    const f = await scrape();
    expect(sampleValue(f, 'statecast_ws_clients')).toBe(4);
    expect(sampleValue(f, 'statecast_ws_dropped_total')).toBe(11);
  });

  it('registers no WebSocket metrics when no callbacks are given', async () => {
    const { scrape } = setupMetrics();
    const f = await scrape();
    expect(f.has('statecast_ws_clients')).toBe(false);
    expect(f.has('statecast_ws_dropped_total')).toBe(false);
  });

  it('reports event-loop lag as p50, p99 and max once the sampler has run', async () => {
    const { scrape } = setupMetrics({ eventLoopResolutionMs: 1 });
    let quantiles: string[] = [];
    // Wait for the sampler's first samples (bounded), then check the shape, not the figures.
    for (let i = 0; i < 200 && quantiles.length === 0; i++) {
      await new Promise((resolve) => setTimeout(resolve, 5));
      quantiles = samplesOf(await scrape(), 'statecast_event_loop_lag_seconds').map((s) => s.labels['quantile']!);
    }
    expect(quantiles.sort()).toEqual(['0.5', '0.99', '1']);
  });
});
