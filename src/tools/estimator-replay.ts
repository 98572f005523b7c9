/**
 * What a replay keeps beside one running estimator: per-sensor tallies, per-entity state (the
 * live track, NIS since the last estimate, running NIS windows, and when asked the measurement
 * log for smoothing and the report series), the ground-truth tally and scratch buffers.
 */
import type { EstimatorRuntime } from '../engine/estimator-runtime.js';
import type { Track } from '../estimation/track.js';
import { MeasurementLog } from './batch-smoother.js';
import { EstimateLineFormatter, PendingNis } from './estimate-line.js';
import { EntitySeries, MeasurementProjector } from './report-series.js';
import { SensorTally, type EstimatorSummary } from './replay-summary.js';
import { TruthTally } from './truth-consistency.js';

/** One entity of an estimator, as the replay follows it. */
export interface EntityReplay {
  readonly entity: string;
  /** JSON text of the entity name, prepared once. */
  readonly entityJson: string;
  /** The engine's live track (undefined after an eviction until the entity returns). */
  track: Track | undefined;
  /** NIS entries since the entity's previous estimate. */
  readonly pendingNis: PendingNis;
  readonly nisSum: Float64Array;
  readonly nisCount: Int32Array;
  readonly log: MeasurementLog | null;
  readonly series: EntitySeries | null;
}

/** See the module comment. */
export class EstimatorReplay {
  readonly name: string;
  readonly formatter: EstimateLineFormatter;
  readonly sensors: readonly SensorTally[];
  readonly sensorByName = new Map<string, SensorTally>();
  readonly entities = new Map<string, EntityReplay>();
  readonly truth: TruthTally;
  /** Rejection reasons seen by this estimator's report series, in first-seen order. */
  readonly reasons: string[] = [];
  estimates = 0;
  healthChanges = 0;
  /** Measurements the smoother's re-filter refused although the live run had accepted them. */
  refilterRefusals = 0;
  /** Scratch for predicted and lag-smoothed estimates. */
  readonly x: Float64Array;
  readonly P: Float64Array;
  private readonly projector: MeasurementProjector;
  private readonly maxM: number;

  /** Prepares tallies for one estimator's runtime. */
  constructor(readonly runtime: EstimatorRuntime) {
    this.name = runtime.name;
    const settings = runtime.estimator.settings;
    const stateNames = settings.process.stateNames;
    const health = runtime.config.health;
    this.formatter = new EstimateLineFormatter(runtime.name, stateNames);
    this.sensors = runtime.sensors.map((s) => new SensorTally(s.name, s.index, s.model.dim, health.windowN, health.confidence));
    for (const s of this.sensors) this.sensorByName.set(s.name, s);
    this.truth = new TruthTally(stateNames);
    const n = stateNames.length;
    this.x = new Float64Array(n);
    this.P = new Float64Array(n * n);
    this.maxM = Math.max(...runtime.sensors.map((s) => s.model.dim));
    this.projector = new MeasurementProjector(settings.priorMean, settings.priorCovariance, this.maxM);
  }

  /** Starts following an entity's (new) track; a returning entity keeps its log and series. */
  adopt(entity: string, track: Track | undefined, keepLog: boolean, keepSeries: boolean): void {
    const known = this.entities.get(entity);
    if (known !== undefined) {
      known.track = track;
      return;
    }
    const k = this.sensors.length;
    this.entities.set(entity, {
      entity,
      entityJson: JSON.stringify(entity),
      track,
      pendingNis: new PendingNis(),
      nisSum: new Float64Array(k),
      nisCount: new Int32Array(k),
      log: keepLog ? new MeasurementLog(this.maxM) : null,
      series: keepSeries ? new EntitySeries(this.name, entity, this.runtime) : null,
    });
  }

  /** Drops the reference to an evicted track. */
  forgetTrack(entity: string): void {
    const e = this.entities.get(entity);
    if (e !== undefined) e.track = undefined;
  }

  /**
   * Logs an accepted measurement for smoothing and the report. The covariance is read from the
   * sensor's decode slot, which the engine has just filled (and mapped into model space).
   */
  recordAccepted(entity: EntityReplay, sensorIndex: number, tS: number, nis: number, values: Float64Array): void {
    const sensor = this.runtime.sensors[sensorIndex]!;
    const m = sensor.model.dim;
    const R = sensor.slot.hasCovariance ? sensor.slot.covariance.subarray(0, m * m) : null;
    entity.log?.add(tS, sensorIndex, values, m, R);
    const series = entity.series;
    if (series === null) return;
    const own = series.sensors[sensorIndex]!;
    if (Number.isFinite(nis)) {
      own.nisT.push(tS);
      own.nis.push(nis);
      const ratio = entity.track?.stats[sensorIndex]?.innovationRatio;
      if (ratio !== undefined) own.innovations.pushRow(ratio, m);
    }
    if (this.projector.project(sensor.model, values, R)) {
      series.measuredT.push(tS);
      series.measuredSensor.push(sensorIndex);
      series.measuredX.pushRow(this.projector.out);
    }
  }

  /** Scores one truth sample against the entity's track; records it in the report series. */
  scoreTruth(entity: EntityReplay, tS: number, fields: Readonly<Record<string, unknown>>): void {
    this.truth.add(entity.track, tS, fields);
    const series = entity.series;
    if (series === null) return;
    const names = this.runtime.estimator.settings.process.stateNames;
    series.truthT.push(tS);
    const row = series.truthX.length;
    series.truthX.pushRow(this.x, names.length);
    const view = series.truthX.row(row);
    names.forEach((name, i) => {
      const v = fields[name];
      view[i] = typeof v === 'number' ? v : Number.NaN;
    });
  }

  /** Index of a rejection reason in `reasons` (added when new). */
  reasonIndex(reason: string): number {
    let i = this.reasons.indexOf(reason);
    if (i < 0) i = this.reasons.push(reason) - 1;
    return i;
  }

  /** The frozen figures. */
  summary(): EstimatorSummary {
    return {
      estimator: this.name,
      entities: this.entities.size,
      estimates: this.estimates,
      healthChanges: this.healthChanges,
      refilterRefusals: this.refilterRefusals,
      sensors: this.sensors.map((s) => s.summary()),
      truth: this.truth.summary(),
    };
  }
}
