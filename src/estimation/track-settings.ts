import type { ProcessModel } from './models/process-model.js';
import type { MeasurementModel } from './measurements/measurement-model.js';
import type { FilterWorkspace } from './filters/filter-workspace.js';
import type { UpdateVerdict } from './filters/kalman-update.js';

/**
 * One measurement update step (KF/EKF linearized, or UKF unscented), chosen once per estimator
 * so the hot path never switches on the filter kind.
 */
export type MeasurementUpdate = (
  model: MeasurementModel,
  y: Float64Array,
  R: Float64Array,
  gateThreshold: number,
  x: Float64Array,
  P: Float64Array,
  ws: FilterWorkspace,
) => UpdateVerdict;

/** A sensor as the track sees it: its position in the processing order and its model. */
export interface TrackSensor {
  /** Name from the config, e.g. `gnss`. */
  readonly name: string;
  readonly model: MeasurementModel;
  /** Chi-square gate γ for this sensor's M at the configured probability (Infinity: no gate). */
  readonly gateThreshold: number;
  /** Expected time between measurements (for silence detection), when known. */
  readonly expectedPeriodS?: number;
}

/** What a track does after too many consecutive gate rejections on one sensor. */
export type RejectionRunPolicy = 'reinitialize' | 'inflate';

/** Everything an estimator's tracks share; built once from the config (see the engine). */
export interface TrackSettings {
  readonly process: ProcessModel;
  /** Sensors in their deterministic processing order (simultaneous readings apply in this order). */
  readonly sensors: readonly TrackSensor[];
  readonly update: MeasurementUpdate;
  /** Prior mean and covariance a track starts from (and returns to on re-initialization). */
  readonly priorMean: Float64Array;
  readonly priorCovariance: Float64Array;
  /** Late data older than this (behind the newest time) is dropped as `too-late`. */
  readonly horizonS: number;
  readonly maxEntries: number;
  /** A state snapshot every this many history entries (memory against re-filter cost). */
  readonly snapshotEvery: number;
  /** Time stamps further ahead of the caller's clock than this are rejected as `future`. */
  readonly futureToleranceS: number;
  /** Past this coast time the track is stale and stops claiming a valid estimate. */
  readonly maxCoastS: number;
  readonly maxConsecutiveRejections: number;
  readonly onRejectionRun: RejectionRunPolicy;
  /** Factor applied to P by the `inflate` policy. */
  readonly inflateFactor: number;
  /** Fixed-lag smoother lag in steps (0: off). */
  readonly lagSteps: number;
  /** NIS window and the confidence of its acceptance band. */
  readonly healthWindowN: number;
  readonly healthConfidence: number;
  /** Largest |y| accepted; beyond it a value is malformed (no unit used here gets near 1e12). */
  readonly maxAbsValue: number;
}
