/**
 * An EngineView built from canned tracks for adapter tests: real EngineEvents, plain arrays
 * for the tracks, and a record of reset calls. Uses the invented demo scenarios only (tank farm
 * `tank-a..c`, vehicle yard `tug-01..12`).
 */
import { EngineEvents, type EngineEventMap } from '../../src/engine/engine-events.js';
import type {
  EngineCounters, EngineView, LatestEstimate, SensorSummary, TrackDetail, TrackSummary,
} from '../../src/engine/engine-view.js';

/** A sensor summary with healthy defaults; `overrides` replace single fields. */
export function fakeSensor(name: string, overrides: Partial<SensorSummary> = {}): SensorSummary {
  return {
    name,
    accepted: 40,
    late: 1,
    rejected: { gate: 2 },
    lastNis: 0.8,
    windowedNisMean: 1.05,
    windowFill: 20,
    nisBand: [0.55, 1.55],
    gateRejectionRate: 0.05,
    innovationRatio: [0.4],
    lastTimeS: 1_767_225_600,
    health: 'ok',
    ...overrides,
  };
}

/** A one-state track detail (level in metres) with healthy defaults. */
export function fakeTrack(estimator: string, entity: string, overrides: Partial<TrackDetail> = {}): TrackDetail {
  return {
    estimator,
    entity,
    initialized: true,
    tS: 1_767_225_600,
    coastS: 0.5,
    stale: false,
    traceP: 0.0004,
    health: { state: 'ok', reasons: [] },
    stateNames: ['levelM'],
    state: [2.31],
    sigma: [0.02],
    covariance: [[0.0004]],
    sensors: [fakeSensor('level')],
    counters: { accepted: 40 },
    ...overrides,
  };
}

/** A 'measurement:accepted' payload for tank-a's level sensor; `overrides` replace fields. */
export function acceptedEvent(
  overrides: Partial<EngineEventMap['measurement:accepted']> = {},
): EngineEventMap['measurement:accepted'] {
  return {
    estimator: 'tanks', sensor: 'level', entity: 'tank-a', late: false, latencyS: 0.05,
    tS: 1_767_225_600, nis: 0.7, values: new Float64Array([2.31]), sequence: null, ...overrides,
  };
}

/** A 'measurement:rejected' payload (a gate rejection on tank-a's level); `overrides` replace fields. */
export function rejectedEvent(
  overrides: Partial<EngineEventMap['measurement:rejected']> = {},
): EngineEventMap['measurement:rejected'] {
  return {
    estimator: 'tanks', sensor: 'level', entity: 'tank-a', topic: 'farm/tank-a/level', reason: 'gate',
    tS: 1_767_225_600, nis: Number.NaN, sequence: null, values: new Float64Array([2.31]), ...overrides,
  };
}

/** The summary fields of a detail, as listTracks returns them. */
export function summaryOf(t: TrackDetail): TrackSummary {
  const { estimator, entity, initialized, tS, coastS, stale, traceP, health } = t;
  return { estimator, entity, initialized, tS, coastS, stale, traceP, health };
}

/** A fake engine whose tracks the test edits directly. */
export class FakeEngineView implements EngineView {
  readonly events = new EngineEvents();
  estimators: string[] = ['tanks', 'yard'];
  tracks: TrackDetail[] = [];
  latest: LatestEstimate[] = [];
  engineCounters: EngineCounters = { received: 0, accepted: 0, estimatesProduced: 0 };
  /** Every resetTrack call, in order. */
  readonly resets: { estimator: string; entity: string }[] = [];
  /** How often listTracks was called (to check scrape-time reads). */
  listCalls = 0;

  constructor(tracks: TrackDetail[] = []) {
    this.tracks = tracks;
  }

  estimatorNames(): readonly string[] {
    return this.estimators;
  }

  listTracks(): TrackSummary[] {
    this.listCalls++;
    return this.tracks.map(summaryOf);
  }

  trackDetail(estimator: string, entity: string): TrackDetail | null {
    return this.tracks.find((t) => t.estimator === estimator && t.entity === entity) ?? null;
  }

  resetTrack(estimator: string, entity: string): boolean {
    this.resets.push({ estimator, entity });
    return this.trackDetail(estimator, entity) !== null;
  }

  latestEstimates(): Iterable<LatestEstimate> {
    return this.latest;
  }

  trackCount(estimator: string): number {
    return this.tracks.filter((t) => t.estimator === estimator).length;
  }

  counters(): EngineCounters {
    return this.engineCounters;
  }

  /** Removes a track as the engine's eviction would, and says so on the events. */
  evict(estimator: string, entity: string): void {
    this.tracks = this.tracks.filter((t) => !(t.estimator === estimator && t.entity === entity));
    this.events.emit('track:evicted', { estimator, entity, why: 'idle' });
  }
}
