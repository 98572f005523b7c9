/** Types of track-store.js for the unit tests (the browser loads the JavaScript as is). */
import type { RingSeries } from './ring-series.js';

export declare const HISTORY_POINTS: number;
export declare const HISTORY_S: number;
export declare const ALERT_LOG_SIZE: number;
export declare function trackKey(estimator: string, entity: string): string;

export interface HealthView {
  readonly state: 'ok' | 'degraded' | 'failed';
  readonly reasons: readonly string[];
}

export interface TrackRecord {
  readonly estimator: string;
  readonly entity: string;
  readonly key: string;
  readonly health: HealthView;
  readonly stale: boolean;
  readonly stateNames: readonly string[] | null;
  readonly filtered: RingSeries | null;
  readonly smoothed: RingSeries | null;
  readonly readings: Map<string, RingSeries>;
  readonly nisPolled: Map<string, RingSeries>;
  readonly sensors: Map<string, Record<string, unknown>>;
  readonly rejections: RingSeries;
}

export interface StoreChanges {
  readonly data: Set<string>;
  readonly list: Set<string>;
  readonly alerts: boolean;
}

export declare class TrackStore {
  readonly tracks: Map<string, TrackRecord>;
  readonly alerts: readonly Record<string, unknown>[];
  applyEstimate(payload: unknown): void;
  applyHealthChange(change: unknown): void;
  applyMeasurement(measurement: unknown): void;
  applyTrackList(body: unknown): void;
  applyDetail(detail: unknown): void;
  takeChanges(): StoreChanges;
}
