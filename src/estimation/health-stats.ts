/**
 * The incremental statistics a track keeps per sensor to judge filter health: a window of the
 * last N NIS values with its mean and chi-square band, the share of gate rejections among the
 * last N gate decisions, the last innovation ratios ν_i/√S_ii, and counters by rejection reason.
 * Everything is preallocated at construction; the record methods allocate nothing.
 */
import { ModelConfigError } from './model-config-error.js';
import { nisBand, type ConsistencyBand } from './filters/consistency-band.js';
import { REJECTION_REASONS, type RejectionReason } from './rejection-reason.js';
import { checkHealthSnapshot, numberFromJson, numberToJson, type SensorHealthSnapshot } from './health-stats-snapshot.js';
import { SlidingMeanWindow, SlidingShareWindow } from './sliding-window.js';

export { REJECTION_REASONS, type RejectionReason } from './rejection-reason.js';
export type { SensorHealthSnapshot } from './health-stats-snapshot.js';

/** Shape and test level of one sensor's statistics. */
export interface SensorHealthOptions {
  /** Dimension m of the sensor's measurement vector (integer ≥ 1). */
  readonly measurementDim: number;
  /** Window length N: NIS values and gate decisions kept (integer ≥ 1). */
  readonly windowN: number;
  /** Two-sided confidence of the NIS band, in (0, 1), e.g. 0.95. */
  readonly confidence: number;
}

// A Map, not an object, so an untyped caller's 'toString' finds no index.
const REASON_INDEX: ReadonlyMap<RejectionReason, number> = new Map(REJECTION_REASONS.map((r, i) => [r, i]));

function requireInteger(field: string, value: number): void {
  if (!Number.isInteger(value) || value < 1) {
    throw new ModelConfigError(field, `SensorHealthStats: ${field} must be an integer ≥ 1, got ${String(value)}`);
  }
}

/** Per-sensor health statistics of one track (see the file comment). */
export class SensorHealthStats {
  /** Measurement dimension m. */
  readonly measurementDim: number;
  /** Window length N. */
  readonly windowN: number;
  /** Two-sided confidence of the NIS band. */
  readonly confidence: number;
  /** Lower end of the band of the windowed NIS mean for a full window. */
  readonly nisBandLower: number;
  /** Upper end of the band of the windowed NIS mean for a full window. */
  readonly nisBandUpper: number;
  /** ν_i/√S_ii of the last accepted measurement (NaN before one); ~N(0, 1) for a consistent filter. */
  readonly innovationRatio: Float64Array;

  private readonly nisWindow: SlidingMeanWindow;
  private readonly gateWindow: SlidingShareWindow; // yes = rejected by the gate
  private readonly rejections: Float64Array;
  private acceptedCount = 0;
  private lateCount = 0;
  private recoveredCount = 0;
  private gateStreak = 0;
  private lastNisValue = Number.NaN;
  private lastTimeValue = Number.NaN;
  private lastRejectedNisValue = Number.NaN;
  private lastRejectionTimeValue = Number.NaN;
  private lastReason: RejectionReason | null = null;

  /** Preallocates the windows; throws ModelConfigError for a bad dimension, window or confidence. */
  constructor(options: SensorHealthOptions) {
    requireInteger('measurementDim', options.measurementDim);
    requireInteger('windowN', options.windowN);
    if (!(options.confidence > 0 && options.confidence < 1)) {
      throw new ModelConfigError('confidence', `SensorHealthStats: confidence must lie strictly between 0 and 1, got ${String(options.confidence)}`);
    }
    this.measurementDim = options.measurementDim;
    this.windowN = options.windowN;
    this.confidence = options.confidence;
    const band = nisBand(this.measurementDim, this.windowN, this.confidence);
    this.nisBandLower = band.lower;
    this.nisBandUpper = band.upper;
    this.innovationRatio = new Float64Array(this.measurementDim).fill(Number.NaN);
    this.nisWindow = new SlidingMeanWindow(this.windowN);
    this.gateWindow = new SlidingShareWindow(this.windowN);
    this.rejections = new Float64Array(REJECTION_REASONS.length);
  }

  /**
   * Records a measurement the filter used: its NIS, innovation ν and diag(S) (first m entries of
   * each are read) and its time in s. A non-finite NIS is kept as lastNis but not put in the window.
   */
  recordAccepted(nis: number, innovation: Float64Array, sDiagonal: Float64Array, tS: number): void {
    this.acceptedCount += 1;
    this.gateStreak = 0;
    this.lastNisValue = nis;
    this.lastTimeValue = tS;
    for (let i = 0; i < this.measurementDim; i++) {
      this.innovationRatio[i] = innovation[i]! / Math.sqrt(sDiagonal[i]!);
    }
    this.gateWindow.push(false);
    if (Number.isFinite(nis)) this.nisWindow.push(nis);
  }

  /**
   * Records a measurement that was not used, with its reason, time in s and, when known, its NIS.
   * Only 'gate' counts as a gate decision; the NIS of a rejected measurement stays out of the NIS
   * window, so one outlier cannot swing the mean (it shows in gateRejectionRate instead).
   */
  recordRejected(reason: RejectionReason, tS: number, nis: number = Number.NaN): void {
    const index = REASON_INDEX.get(reason);
    if (index === undefined) return; // not a reason at all (untyped caller): nothing to count
    this.rejections[index] = this.rejections[index]! + 1;
    this.lastReason = reason;
    this.lastRejectionTimeValue = tS;
    this.lastRejectedNisValue = nis;
    if (reason === 'gate') {
      this.gateStreak += 1;
      this.gateWindow.push(true);
    }
  }

  /** Counts an accepted measurement that arrived out of order (call it besides recordAccepted). */
  recordLate(): void {
    this.lateCount += 1;
  }

  /** Counts a recovery (the track restarted after refused numerics); ends any gate-rejection run. */
  recordRecovered(): void {
    this.recoveredCount += 1;
    this.gateStreak = 0;
  }

  /** NIS values in the window now (0..windowN). */
  get windowFill(): number {
    return this.nisWindow.fill;
  }

  /** Mean of the NIS values in the window; NaN while the window is empty. ≈ m for a consistent filter. */
  get windowedNisMean(): number {
    return this.nisWindow.mean;
  }

  /**
   * Band of the windowed NIS mean for a window holding `fill` values (default: the current fill);
   * NaN ends for fill 0. Computes two chi-square quantiles (microseconds) and allocates the
   * result unless fill = windowN: call it when evaluating health, not per measurement.
   */
  nisBandForFill(fill: number = this.nisWindow.fill): ConsistencyBand {
    if (fill === this.windowN) return { lower: this.nisBandLower, upper: this.nisBandUpper };
    if (fill === 0) return { lower: Number.NaN, upper: Number.NaN };
    return nisBand(this.measurementDim, fill, this.confidence);
  }

  /** Gate decisions in the window now (accepted plus gate-rejected, 0..windowN). */
  get gateDecisionCount(): number {
    return this.gateWindow.fill;
  }

  /** Share of gate rejections among the last windowN gate decisions; NaN before the first decision. */
  get gateRejectionRate(): number {
    return this.gateWindow.share;
  }

  /** Rejections so far for one reason. */
  rejectionCount(reason: RejectionReason): number {
    const index = REASON_INDEX.get(reason);
    return index === undefined ? 0 : this.rejections[index]!;
  }

  /** Rejections so far, all reasons. */
  get rejectedTotal(): number {
    let total = 0;
    for (let i = 0; i < this.rejections.length; i++) total += this.rejections[i]!;
    return total;
  }

  /** Accepted measurements so far. */
  get accepted(): number {
    return this.acceptedCount;
  }

  /** Accepted measurements that arrived out of order. */
  get late(): number {
    return this.lateCount;
  }

  /** Recoveries so far. */
  get recovered(): number {
    return this.recoveredCount;
  }

  /** Gate rejections since the last accepted measurement or recovery. */
  get consecutiveGateRejections(): number {
    return this.gateStreak;
  }

  /** NIS of the last accepted measurement (NaN before one). */
  get lastNis(): number {
    return this.lastNisValue;
  }

  /** Time of the last accepted measurement, s (NaN before one). */
  get lastTimeS(): number {
    return this.lastTimeValue;
  }

  /** NIS of the last rejected measurement (NaN when unknown). */
  get lastRejectedNis(): number {
    return this.lastRejectedNisValue;
  }

  /** Time of the last rejection, s (NaN before one). */
  get lastRejectionTimeS(): number {
    return this.lastRejectionTimeValue;
  }

  /** Reason of the last rejection (null before one). */
  get lastRejectionReason(): RejectionReason | null {
    return this.lastReason;
  }

  /** A plain JSON-able copy of the statistics (NaN as null), for checkpoints. */
  snapshot(): SensorHealthSnapshot {
    const nisWindow = Array.from({ length: this.nisWindow.fill }, (_, k) => this.nisWindow.at(k));
    const gateWindow = Array.from({ length: this.gateWindow.fill }, (_, k): 0 | 1 => (this.gateWindow.at(k) ? 1 : 0));
    const rejections = Object.fromEntries(REJECTION_REASONS.map((r) => [r, this.rejectionCount(r)]));
    return {
      version: 1,
      measurementDim: this.measurementDim,
      windowN: this.windowN,
      nisWindow,
      gateWindow,
      rejections: rejections as Record<RejectionReason, number>,
      accepted: this.acceptedCount,
      late: this.lateCount,
      recovered: this.recoveredCount,
      consecutiveGateRejections: this.gateStreak,
      lastNis: numberToJson(this.lastNisValue),
      lastTimeS: numberToJson(this.lastTimeValue),
      lastRejectedNis: numberToJson(this.lastRejectedNisValue),
      lastRejectionTimeS: numberToJson(this.lastRejectionTimeValue),
      lastRejectionReason: this.lastReason,
      innovationRatio: Array.from(this.innovationRatio, numberToJson),
    };
  }

  /**
   * Rebuilds statistics from a snapshot for a sensor with the given options. Throws
   * ModelConfigError when the snapshot is malformed or its measurementDim or windowN differ from
   * the options (the band is recomputed from options.confidence).
   */
  static restore(snapshot: unknown, options: SensorHealthOptions): SensorHealthStats {
    const stats = new SensorHealthStats(options);
    const s = checkHealthSnapshot(snapshot, stats.measurementDim, stats.windowN);
    for (const v of s.nisWindow) stats.nisWindow.push(v);
    for (const g of s.gateWindow) stats.gateWindow.push(g === 1);
    REJECTION_REASONS.forEach((r, i) => (stats.rejections[i] = s.rejections[r]));
    stats.acceptedCount = s.accepted;
    stats.lateCount = s.late;
    stats.recoveredCount = s.recovered;
    stats.gateStreak = s.consecutiveGateRejections;
    stats.lastNisValue = numberFromJson(s.lastNis);
    stats.lastTimeValue = numberFromJson(s.lastTimeS);
    stats.lastRejectedNisValue = numberFromJson(s.lastRejectedNis);
    stats.lastRejectionTimeValue = numberFromJson(s.lastRejectionTimeS);
    stats.lastReason = s.lastRejectionReason;
    s.innovationRatio.forEach((v, i) => (stats.innovationRatio[i] = numberFromJson(v)));
    return stats;
  }
}
