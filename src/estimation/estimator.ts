import { kalmanUpdateInPlace } from './filters/kalman-update.js';
import { unscentedUpdateInPlace } from './filters/ukf-update.js';
import { UnscentedWorkspace, type UnscentedParameters } from './filters/unscented-transform.js';
import { chiSquareQuantile } from './filters/chi-square.js';
import type { FilterWorkspace } from './filters/filter-workspace.js';
import type { ProcessModel } from './models/process-model.js';
import type { MeasurementModel } from './measurements/measurement-model.js';
import { checkCovariance } from './models/matrix-checks.js';
import { ModelConfigError } from './model-config-error.js';
import { Track } from './track.js';
import type { MeasurementUpdate, RejectionRunPolicy, TrackSensor, TrackSettings } from './track-settings.js';
import { TrackWorkspace } from './track-workspace.js';

/** The filter family member an estimator runs. */
export type FilterKind = 'kf' | 'ekf' | 'ukf';

/** A sensor of an estimator definition. */
export interface SensorDefinition {
  readonly name: string;
  readonly model: MeasurementModel;
  /** Expected time between measurements in seconds, for silence detection. */
  readonly expectedPeriodS?: number;
}

/** Everything that defines an estimator; omitted fields take the documented defaults. */
export interface EstimatorDefinition {
  readonly process: ProcessModel;
  readonly sensors: readonly SensorDefinition[];
  /** Default 'ekf' (identical to 'kf' for linear sensors). */
  readonly filter?: FilterKind;
  /** UKF parameters; default α = 1, β = 2, κ = 0. */
  readonly unscented?: UnscentedParameters;
  /** Prior mean (default zeros) and covariance (default 1e6·I) of a new track. */
  readonly priorMean?: ArrayLike<number>;
  readonly priorCovariance?: ArrayLike<number>;
  /** Gate probability (default 0.99); null disables gating. */
  readonly gateProbability?: number | null;
  readonly maxConsecutiveRejections?: number;
  readonly onRejectionRun?: RejectionRunPolicy;
  readonly inflateFactor?: number;
  /** Late-data horizon (default 120 s) and history size (default 64 entries). */
  readonly horizonS?: number;
  readonly maxEntries?: number;
  /** State snapshot every this many entries (default 8). */
  readonly snapshotEvery?: number;
  readonly futureToleranceS?: number;
  readonly maxCoastS?: number;
  /** Fixed-lag smoother lag in steps (default 0: off). */
  readonly lagSteps?: number;
  readonly healthWindowN?: number;
  readonly healthConfidence?: number;
}

/**
 * An estimator: one process model, its sensors and settings, shared by every track (entity) it
 * creates. This is the core's public entry point: the daemon, the offline tools and the tests
 * all build an Estimator and feed its tracks the same way.
 */
export class Estimator {
  readonly settings: TrackSettings;
  readonly workspace: TrackWorkspace;
  readonly filter: FilterKind;

  /** Validates the definition (dimensions, prior PSD, parameters) and precomputes gates and workspaces. */
  constructor(def: EstimatorDefinition) {
    const n = def.process.dim;
    def.sensors.forEach((s, i) => {
      if (s.model.stateDim !== n) {
        throw new ModelConfigError(`sensors[${i}]`, `sensors[${i}] (${s.name}) reads ${s.model.stateDim} states but the model has ${n}`);
      }
    });
    if (def.sensors.length === 0) throw new ModelConfigError('sensors', 'an estimator needs at least one sensor');
    const priorMean = Float64Array.from(def.priorMean ?? new Float64Array(n));
    if (priorMean.length !== n) throw new ModelConfigError('priorMean', `prior mean must have ${n} entries, got ${priorMean.length}`);
    const priorCovariance = def.priorCovariance === undefined ? scaledIdentity(n, 1e6) : checkCovariance('P0', def.priorCovariance, n);
    this.filter = def.filter ?? 'ekf';
    const gateProbability = def.gateProbability === undefined ? 0.99 : def.gateProbability;
    if (gateProbability !== null && !(gateProbability > 0 && gateProbability < 1)) {
      throw new ModelConfigError('gateProbability', `gate probability must be in (0, 1), got ${gateProbability}`);
    }
    const sensors: TrackSensor[] = def.sensors.map((s) => ({
      name: s.name,
      model: s.model,
      gateThreshold: gateProbability === null ? Number.POSITIVE_INFINITY : chiSquareQuantile(gateProbability, s.model.dim),
      ...(s.expectedPeriodS === undefined ? {} : { expectedPeriodS: s.expectedPeriodS }),
    }));
    const partial = {
      process: def.process,
      sensors,
      priorMean,
      priorCovariance,
      horizonS: positive('horizonS', def.horizonS ?? 120),
      maxEntries: positiveInteger('maxEntries', def.maxEntries ?? 64),
      snapshotEvery: positiveInteger('snapshotEvery', def.snapshotEvery ?? 8),
      futureToleranceS: nonNegative('futureToleranceS', def.futureToleranceS ?? 5),
      maxCoastS: positive('maxCoastS', def.maxCoastS ?? 30),
      maxConsecutiveRejections: positiveInteger('maxConsecutiveRejections', def.maxConsecutiveRejections ?? 5),
      onRejectionRun: def.onRejectionRun ?? 'reinitialize',
      inflateFactor: positive('inflateFactor', def.inflateFactor ?? 10),
      lagSteps: nonNegativeInteger('lagSteps', def.lagSteps ?? 0),
      healthWindowN: positiveInteger('healthWindowN', def.healthWindowN ?? 20),
      healthConfidence: def.healthConfidence ?? 0.95,
      maxAbsValue: 1e12,
    };
    let update: MeasurementUpdate = kalmanUpdateInPlace;
    const provisional: TrackSettings = { ...partial, update };
    this.workspace = new TrackWorkspace(provisional);
    if (this.filter === 'ukf') {
      const uws = new UnscentedWorkspace(n, this.workspace.maxM, def.unscented ?? { alpha: 1, beta: 2, kappa: 0 });
      update = (model, y, R, gate, x, P, ws: FilterWorkspace) => unscentedUpdateInPlace(model, y, R, gate, x, P, ws, uws);
    }
    this.settings = Object.freeze({ ...partial, update });
  }

  /** A new, uninitialized track for one entity. */
  createTrack(): Track {
    return new Track(this.settings, this.workspace);
  }

  /** Index of a sensor by name (−1 when unknown). */
  sensorIndex(name: string): number {
    return this.settings.sensors.findIndex((s) => s.name === name);
  }
}

function scaledIdentity(n: number, v: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) out[i * n + i] = v;
  return out;
}

function positive(name: string, v: number): number {
  if (!(v > 0) || !Number.isFinite(v)) throw new ModelConfigError(name, `${name} must be a positive number, got ${v}`);
  return v;
}

function nonNegative(name: string, v: number): number {
  if (!(v >= 0) || !Number.isFinite(v)) throw new ModelConfigError(name, `${name} must be a non-negative number, got ${v}`);
  return v;
}

function positiveInteger(name: string, v: number): number {
  if (!Number.isInteger(v) || v < 1) throw new ModelConfigError(name, `${name} must be a positive integer, got ${v}`);
  return v;
}

function nonNegativeInteger(name: string, v: number): number {
  if (!Number.isInteger(v) || v < 0) throw new ModelConfigError(name, `${name} must be a non-negative integer, got ${v}`);
  return v;
}
