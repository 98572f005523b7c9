/**
 * The per-entity series (windowed NIS, innovation ratio, trace P, coast seconds, health state)
 * and `statecast_metrics_entities_omitted`, produced in one pass over the engine view. At 10,000
 * tracks these are ~100k samples; setting them on prom-client gauges hashed every label set
 * and then formatted every sample on each scrape, seconds of blocked event loop. Here the walk
 * feeds a sink: the exposition text is built directly (entity-series-text.ts), and the same
 * walk gives prom-client's JSON shape for `getMetricsAsJSON()`.
 *
 * Cardinality is bounded per estimator by `maxEntities`: beyond it, entities in a non-ok health
 * state come first (failed, then degraded), then by entity name, and the rest are counted as
 * omitted. Non-finite figures are left out rather than exposed as NaN.
 */
import type { EngineView, TrackSummary } from '../../engine/engine-view.js';
import type { HealthState } from '../../engine/health-change.js';

/** The value of `statecast_health_state`: 0 ok, 1 degraded, 2 failed. */
export const HEALTH_STATE_VALUE: Readonly<Record<HealthState, number>> = { ok: 0, degraded: 1, failed: 2 };

/** One family written by the walk, in exposition order. */
export interface EntityFamily {
  readonly name: string;
  readonly help: string;
}

/** The families, in the order they are exposed. */
export const ENTITY_FAMILIES = {
  windowedNis: { name: 'statecast_windowed_nis', help: 'Mean normalized innovation squared over the sensor window (expected about the measurement dimension).' },
  innovationRatio: { name: 'statecast_innovation_ratio', help: 'Innovation over its predicted standard deviation for the last accepted measurement, by component index.' },
  traceP: { name: 'statecast_trace_p', help: 'Trace of the state covariance P (expected squared error; mixed units when states differ in kind).' },
  coastSeconds: { name: 'statecast_coast_seconds', help: 'Seconds the track has been predicted forward without an accepted measurement.' },
  healthState: { name: 'statecast_health_state', help: 'Health of a track (sensor="") or of one of its sensors: 0 ok, 1 degraded, 2 failed.' },
  omitted: { name: 'statecast_metrics_entities_omitted', help: 'Entities of an estimator left out of the per-entity series by http.metrics.maxEntitiesPerEstimator.' },
} as const satisfies Record<string, EntityFamily>;

/** Family keys of ENTITY_FAMILIES. */
export type EntityFamilyKey = keyof typeof ENTITY_FAMILIES;

/** Receives the samples of one walk; `track` precedes the samples of that track. */
export interface EntitySeriesSink {
  track(estimator: string, entity: string): void;
  /** A sample of the current track; `sensor` null for track-level figures, `component` null when none. */
  sample(family: EntityFamilyKey, sensor: string | null, component: number | null, value: number): void;
  omitted(estimator: string, count: number): void;
}

const RANK: Readonly<Record<HealthState, number>> = { failed: 0, degraded: 1, ok: 2 };

function byHealthThenName(a: TrackSummary, b: TrackSummary): number {
  const r = RANK[a.health.state] - RANK[b.health.state];
  if (r !== 0) return r;
  return a.entity < b.entity ? -1 : a.entity > b.entity ? 1 : 0;
}

/** Walks the tracks of `view` into `sink`, at most `maxEntities` per estimator. */
export function walkEntitySeries(view: EngineView, maxEntities: number, sink: EntitySeriesSink): void {
  const byEstimator = new Map<string, TrackSummary[]>();
  for (const name of view.estimatorNames()) byEstimator.set(name, []);
  for (const track of view.listTracks()) {
    let list = byEstimator.get(track.estimator);
    if (list === undefined) byEstimator.set(track.estimator, (list = []));
    list.push(track);
  }
  for (const [estimator, tracks] of byEstimator) {
    // Sorting only when over the cap keeps the common case a plain pass in engine order.
    const chosen = tracks.length > maxEntities ? tracks.sort(byHealthThenName).slice(0, maxEntities) : tracks;
    for (const track of chosen) walkTrack(view, track, sink);
    sink.omitted(estimator, tracks.length - chosen.length);
  }
}

function walkTrack(view: EngineView, track: TrackSummary, sink: EntitySeriesSink): void {
  sink.track(track.estimator, track.entity);
  if (Number.isFinite(track.traceP)) sink.sample('traceP', null, null, track.traceP);
  if (Number.isFinite(track.coastS)) sink.sample('coastSeconds', null, null, track.coastS);
  sink.sample('healthState', null, null, HEALTH_STATE_VALUE[track.health.state]);
  const detail = view.trackDetail(track.estimator, track.entity);
  if (detail === null) return;
  for (const s of detail.sensors) {
    if (Number.isFinite(s.windowedNisMean)) sink.sample('windowedNis', s.name, null, s.windowedNisMean);
    for (let i = 0; i < s.innovationRatio.length; i++) {
      const ratio = s.innovationRatio[i]!;
      if (Number.isFinite(ratio)) sink.sample('innovationRatio', s.name, i, ratio);
    }
    sink.sample('healthState', s.name, null, HEALTH_STATE_VALUE[s.health]);
  }
}
