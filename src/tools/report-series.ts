/**
 * The per-entity time series a report draws, collected during the replay: filtered and
 * smoothed estimates with σ, measurements mapped into state space, NIS and normalized
 * innovations per sensor, rejections with their reason, and ground truth when recorded.
 */
import type { EstimatorRuntime } from '../engine/estimator-runtime.js';
import type { MeasurementModel } from '../estimation/measurements/measurement-model.js';
import { Float64Column } from './float64-column.js';

/** The series of one sensor of one entity. */
export interface SensorSeries {
  /** Event time (s) and NIS of each accepted measurement with a NIS. */
  readonly nisT: Float64Column;
  readonly nis: Float64Column;
  /** ν_i/√S_ii of each accepted measurement, in acceptance order. */
  readonly innovations: Float64Column;
}

/** Everything the report shows of one entity. */
export class EntitySeries {
  readonly filteredT = new Float64Column();
  readonly filteredX: Float64Column;
  readonly filteredSigma: Float64Column;
  readonly smoothedT = new Float64Column();
  readonly smoothedX: Float64Column;
  readonly smoothedSigma: Float64Column;
  /** Measurements a sensor reads directly, in state units (NaN in the states it does not set). */
  readonly measuredT = new Float64Column();
  readonly measuredSensor = new Float64Column();
  readonly measuredX: Float64Column;
  readonly truthT = new Float64Column();
  readonly truthX: Float64Column;
  readonly rejectedT = new Float64Column();
  readonly rejectedSensor = new Float64Column();
  /** Index into `reasons`. */
  readonly rejectedReason = new Float64Column();
  readonly sensors: readonly SensorSeries[];

  /** Empty series for an entity of the given estimator. */
  constructor(readonly estimator: string, readonly entity: string, runtime: EstimatorRuntime) {
    const n = runtime.estimator.settings.process.dim;
    this.filteredX = new Float64Column(n);
    this.filteredSigma = new Float64Column(n);
    this.smoothedX = new Float64Column(n);
    this.smoothedSigma = new Float64Column(n);
    this.measuredX = new Float64Column(n);
    this.truthX = new Float64Column(n);
    this.sensors = runtime.sensors.map((s) => ({
      nisT: new Float64Column(),
      nis: new Float64Column(),
      innovations: new Float64Column(s.model.dim),
    }));
  }
}

/** Pushes x and σ = √diag(P) into a pair of columns. */
export function pushEstimate(t: Float64Column, xs: Float64Column, sigmas: Float64Column, tS: number, x: Float64Array, P: Float64Array): void {
  const n = x.length;
  t.push(tS);
  xs.pushRow(x, n);
  const row = sigmas.length;
  sigmas.pushRow(x, n);
  const view = sigmas.row(row);
  for (let i = 0; i < n; i++) view[i] = Math.sqrt(Math.max(0, P[i * n + i]!));
}

/**
 * Maps a measurement into the states it reads directly, by asking the sensor's model to
 * initialize a track from it (the model already knows which states a reading pins down, e.g.
 * a GNSS fix → east/north); states whose prior variance it leaves alone stay NaN.
 */
export class MeasurementProjector {
  private readonly y: Float64Array;
  private readonly x: Float64Array;
  private readonly P: Float64Array;
  readonly out: Float64Array;

  /** Scratch for one estimator's sensors. */
  constructor(private readonly priorMean: Float64Array, private readonly priorCovariance: Float64Array, maxM: number) {
    this.y = new Float64Array(maxM);
    this.x = new Float64Array(priorMean.length);
    this.P = new Float64Array(priorCovariance.length);
    this.out = new Float64Array(priorMean.length);
  }

  /** Projects values (as decoded) with covariance R (or the model's); false when no state is read directly. */
  project(model: MeasurementModel, values: ArrayLike<number>, R: Float64Array | null): boolean {
    const m = model.dim;
    const n = this.x.length;
    const y = this.y.subarray(0, m);
    for (let k = 0; k < m; k++) y[k] = values[k]!;
    model.normalizeInPlace(y);
    this.x.set(this.priorMean);
    this.P.set(this.priorCovariance);
    if (!model.initializeInPlace(y, R ?? model.R, this.x, this.P)) return false;
    let any = false;
    for (let i = 0; i < n; i++) {
      const set = this.P[i * n + i] !== this.priorCovariance[i * n + i];
      this.out[i] = set ? this.x[i]! : Number.NaN;
      any ||= set;
    }
    return any;
  }
}
