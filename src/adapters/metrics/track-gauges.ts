/**
 * Gauges read from the engine on each scrape (prom-client `collect()` callbacks): track counts and
 * the per-entity consistency figures. Each collect resets its gauge and sets it from the current
 * track list, so the series of an evicted track vanish at the next scrape instead of freezing at
 * their last value.
 *
 * Non-finite values (a NIS window with nothing in it yet, trace P before initialization) are left
 * out rather than exposed as NaN: an absent series is what alert expressions handle well.
 */
import { Gauge, type Registry } from 'prom-client';
import type { EngineView, SensorSummary, TrackSummary } from '../../engine/engine-view.js';
import type { HealthState } from '../../engine/health-change.js';

/** The value of `statecast_health_state`: 0 ok, 1 degraded, 2 failed. */
export const HEALTH_STATE_VALUE: Readonly<Record<HealthState, number>> = { ok: 0, degraded: 1, failed: 2 };

interface TrackSample {
  readonly track: TrackSummary;
  readonly sensors: readonly SensorSummary[];
}

/**
 * Registers the scrape-time track gauges on `registry`. Cardinality: per estimator, at most its
 * entity cap × (2 + 1 + sensors × (2 + measurement components)) per-entity series.
 */
export function registerTrackGauges(registry: Registry, view: EngineView): void {
  const snapshot = scrapeSnapshot(view);
  const registers = [registry];

  new Gauge({
    name: 'statecast_tracks',
    help: 'Tracks currently held, by estimator.',
    labelNames: ['estimator'],
    registers,
    collect() {
      this.reset();
      for (const estimator of view.estimatorNames()) this.set({ estimator }, view.trackCount(estimator));
    },
  });

  new Gauge({
    name: 'statecast_windowed_nis',
    help: 'Mean normalized innovation squared over the sensor window (expected about the measurement dimension).',
    labelNames: ['estimator', 'entity', 'sensor'],
    registers,
    collect() {
      this.reset();
      for (const { track, sensors } of snapshot()) {
        for (const s of sensors) {
          setFinite(this, { estimator: track.estimator, entity: track.entity, sensor: s.name }, s.windowedNisMean);
        }
      }
    },
  });

  new Gauge({
    name: 'statecast_innovation_ratio',
    help: 'Innovation over its predicted standard deviation for the last accepted measurement, by component index.',
    labelNames: ['estimator', 'entity', 'sensor', 'component'],
    registers,
    collect() {
      this.reset();
      for (const { track, sensors } of snapshot()) {
        for (const s of sensors) {
          s.innovationRatio.forEach((ratio, i) => {
            const labels = { estimator: track.estimator, entity: track.entity, sensor: s.name, component: String(i) };
            setFinite(this, labels, ratio);
          });
        }
      }
    },
  });

  new Gauge({
    name: 'statecast_trace_p',
    help: 'Trace of the state covariance P (expected squared error; mixed units when states differ in kind).',
    labelNames: ['estimator', 'entity'],
    registers,
    collect() {
      this.reset();
      for (const { track } of snapshot()) setFinite(this, { estimator: track.estimator, entity: track.entity }, track.traceP);
    },
  });

  new Gauge({
    name: 'statecast_coast_seconds',
    help: 'Seconds the track has been predicted forward without an accepted measurement.',
    labelNames: ['estimator', 'entity'],
    registers,
    collect() {
      this.reset();
      for (const { track } of snapshot()) setFinite(this, { estimator: track.estimator, entity: track.entity }, track.coastS);
    },
  });

  new Gauge({
    name: 'statecast_health_state',
    help: 'Health of a track (sensor="") or of one of its sensors: 0 ok, 1 degraded, 2 failed.',
    labelNames: ['estimator', 'entity', 'sensor'],
    registers,
    collect() {
      this.reset();
      for (const { track, sensors } of snapshot()) {
        const { estimator, entity } = track;
        this.set({ estimator, entity, sensor: '' }, HEALTH_STATE_VALUE[track.health.state]);
        for (const s of sensors) this.set({ estimator, entity, sensor: s.name }, HEALTH_STATE_VALUE[s.health]);
      }
    },
  });
}

function setFinite<L extends string>(gauge: Gauge<L>, labels: Partial<Record<L, string>>, value: number): void {
  if (Number.isFinite(value)) gauge.set(labels, value);
}

/**
 * One read of the tracks (with their sensors) shared by the gauges of one scrape. prom-client
 * calls every collect() synchronously within one `registry.metrics()` call, so the memo is
 * dropped at the next microtask: later scrapes always read afresh. Were the collects ever spread
 * over several ticks, each would simply read again; the values stay correct either way.
 */
function scrapeSnapshot(view: EngineView): () => readonly TrackSample[] {
  let cached: TrackSample[] | null = null;
  return () => {
    if (cached !== null) return cached;
    const samples: TrackSample[] = [];
    for (const track of view.listTracks()) {
      const detail = view.trackDetail(track.estimator, track.entity);
      samples.push({ track, sensors: detail === null ? [] : detail.sensors });
    }
    cached = samples;
    queueMicrotask(() => {
      cached = null;
    });
    return samples;
  };
}
