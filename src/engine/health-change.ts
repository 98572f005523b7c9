/** The health of a track or of one of its sensors, with machine-readable reasons. */
export type HealthState = 'ok' | 'degraded' | 'failed';

/** Why a health state is not ok (a closed set: each reason is a bounded metric label). */
export const HEALTH_REASONS = [
  'nis-high',
  'nis-low',
  'gate-rate',
  'silent',
  'coasting',
  'stale',
  'uncertainty',
  'numerics',
  'not-initialized',
] as const;

/** One of HEALTH_REASONS. */
export type HealthReason = (typeof HEALTH_REASONS)[number];

/** A health transition of a track (sensor null) or of one sensor of it. */
export interface HealthChange {
  readonly estimator: string;
  readonly entity: string;
  readonly sensor: string | null;
  readonly from: HealthState;
  readonly to: HealthState;
  readonly reasons: readonly HealthReason[];
  /** Event time (epoch seconds) of the evaluation that changed it. */
  readonly tS: number;
}

/** The health summary carried in each published estimate. */
export interface HealthSummary {
  readonly state: HealthState;
  readonly reasons: readonly HealthReason[];
}
