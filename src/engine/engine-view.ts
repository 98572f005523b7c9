import type { EngineEvents } from './engine-events.js';
import type { EstimateKind } from './estimate-message.js';
import type { HealthState, HealthSummary } from './health-change.js';

/** One sensor of one track, as the API and metrics see it. */
export interface SensorSummary {
  readonly name: string;
  readonly accepted: number;
  readonly late: number;
  /** Rejections by reason (only reasons that occurred). */
  readonly rejected: Readonly<Record<string, number>>;
  readonly lastNis: number;
  readonly windowedNisMean: number;
  readonly windowFill: number;
  /** Two-sided acceptance band of the windowed NIS mean for a full window. */
  readonly nisBand: readonly [number, number];
  readonly gateRejectionRate: number;
  /** Innovation ratio ν_i/√S_ii of the last accepted measurement, per component. */
  readonly innovationRatio: readonly number[];
  readonly lastTimeS: number;
  readonly health: HealthState;
}

/** One track (entity) as the API and metrics see it. */
export interface TrackSummary {
  readonly estimator: string;
  readonly entity: string;
  readonly initialized: boolean;
  /** Time of the last update (epoch s), NaN before initialization. */
  readonly tS: number;
  readonly coastS: number;
  readonly stale: boolean;
  /** trace(P): expected squared estimation error (mixed units when states differ in kind). */
  readonly traceP: number;
  readonly health: HealthSummary;
}

/** A track with its state and per-sensor statistics, for the detail API. */
export interface TrackDetail extends TrackSummary {
  readonly stateNames: readonly string[];
  readonly state: readonly number[];
  readonly sigma: readonly number[];
  readonly covariance: readonly (readonly number[])[];
  readonly sensors: readonly SensorSummary[];
  readonly counters: Readonly<Record<string, number>>;
}

/** A latest estimate, for WebSocket snapshots. */
export interface LatestEstimate {
  readonly estimator: string;
  readonly entity: string;
  readonly kind: EstimateKind;
  readonly payload: string;
}

/** Process-wide counters for metrics (monotonic, since start). */
export interface EngineCounters {
  readonly received: number;
  readonly accepted: number;
  readonly estimatesProduced: number;
}

/**
 * What the adapters (HTTP, WebSocket, metrics) may see and do; the engine implements it.
 * Everything here is synchronous and cheap enough to call from a request handler.
 */
export interface EngineView {
  readonly events: EngineEvents;
  /** Names of the configured estimators, in config order. */
  estimatorNames(): readonly string[];
  listTracks(): TrackSummary[];
  trackDetail(estimator: string, entity: string): TrackDetail | null;
  /** Forgets one track's estimate (an operator action); false when there is no such track. */
  resetTrack(estimator: string, entity: string): boolean;
  /** The newest estimate of each kind per track. */
  latestEstimates(): Iterable<LatestEstimate>;
  trackCount(estimator: string): number;
  counters(): EngineCounters;
}
