import { kalmanPredictInPlace } from './filters/kalman-predict.js';
import { FixedLagSmoother } from './filters/fixed-lag-smoother.js';
import { choleskyInto } from './linalg/cholesky.js';
import { SensorHealthStats, type RejectionReason } from './health-stats.js';
import { TrackHistory } from './track-history.js';
import type { TrackSettings } from './track-settings.js';
import type { TrackWorkspace } from './track-workspace.js';

/** What became of one measurement offered to a track. */
export type IngestVerdict = 'applied' | 'initialized' | 'late-applied' | RejectionReason;

/** Track-level counters (per-sensor ones live in SensorHealthStats). */
export interface TrackCounters {
  /** Re-initializations after a run of gate rejections. */
  reinitializations: number;
  /** P inflations after a run of gate rejections. */
  inflations: number;
  /** Steps refused because the result was not finite or not PSD, each followed by a recovery. */
  numericRefusals: number;
  /** Late measurements inserted and re-filtered. */
  refilters: number;
}

/**
 * One entity's timeline: its estimate x̂(n|n), P(n|n) at time tS, the bounded history that
 * lets late data be re-filtered exactly, coasting, and per-sensor health statistics.
 *
 * Event time drives everything; the caller passes `nowS` (its own clock) only to reject time
 * stamps from the future. A measurement older than the newest one but inside the horizon is
 * inserted in order and the track re-filtered from the snapshot before it, which gives exactly
 * what in-order arrival would have (re-filtering from stored state is the simple exact
 * out-of-sequence method; cf. Bar-Shalom, "Update with out-of-sequence measurements in tracking:
 * exact solution", IEEE Trans. AES 38(3), 2002, from memory). Stored measurements are re-applied
 * without re-gating: they were accepted when they came; only the newcomer is gated.
 */
export class Track {
  readonly x: Float64Array;
  readonly P: Float64Array;
  /** Time of x̂(n|n), P(n|n); NaN before initialization. */
  tS = Number.NaN;
  initialized = false;
  readonly stats: SensorHealthStats[];
  readonly counters: TrackCounters = { reinitializations: 0, inflations: 0, numericRefusals: 0, refilters: 0 };
  readonly history: TrackHistory;
  readonly smoother: FixedLagSmoother | null;
  private readonly n: number;
  /** Per sensor: event time of the first gate rejection of its current run. */
  private readonly runStartS: Float64Array;
  /** Per sensor: event time of its last accepted in-order measurement. */
  private readonly lastAcceptedS: Float64Array;

  /** Creates an uninitialized track holding the prior. */
  constructor(readonly settings: TrackSettings, private readonly ws: TrackWorkspace) {
    const n = settings.process.dim;
    this.n = n;
    this.x = Float64Array.from(settings.priorMean);
    this.P = Float64Array.from(settings.priorCovariance);
    this.stats = settings.sensors.map(
      (s) => new SensorHealthStats({ measurementDim: s.model.dim, windowN: settings.healthWindowN, confidence: settings.healthConfidence }),
    );
    this.history = new TrackHistory(n, ws.maxM, settings.maxEntries, settings.snapshotEvery);
    this.smoother = settings.lagSteps > 0 ? new FixedLagSmoother(n, settings.lagSteps) : null;
    this.runStartS = new Float64Array(settings.sensors.length).fill(Number.NaN);
    this.lastAcceptedS = new Float64Array(settings.sensors.length).fill(Number.NaN);
  }

  /** Latest acceptance time of any sensor but `sensor` (NaN when none). */
  private lastAcceptedOtherS(sensor: number): number {
    let latest = Number.NEGATIVE_INFINITY;
    for (let i = 0; i < this.lastAcceptedS.length; i++) {
      const t = this.lastAcceptedS[i]!;
      if (i !== sensor && t > latest) latest = t;
    }
    return latest === Number.NEGATIVE_INFINITY ? Number.NaN : latest;
  }

  /** Time of the newest applied measurement (or of the state when the history is empty). */
  get newestTimeS(): number {
    const h = this.history;
    return h.count > 0 ? h.timeAt(h.count - 1) : this.tS;
  }

  /**
   * Offers a measurement: y as reported (length M of the sensor; normalized here), its own
   * covariance or null for the sensor's default, its event time and the caller's clock.
   * Never throws for bad data; a rejected measurement leaves the state untouched.
   */
  ingest(sensor: number, y: ArrayLike<number>, R: ArrayLike<number> | null, tS: number, nowS: number): IngestVerdict {
    const spec = this.settings.sensors[sensor];
    if (spec === undefined) throw new RangeError(`sensor index ${sensor} out of range`);
    const m = spec.model.dim;
    const ws = this.ws;
    const stats = this.stats[sensor]!;
    if (!this.copyMeasurement(y, R, m, spec.model.R)) return this.reject(stats, 'malformed', tS);
    if (!Number.isFinite(tS)) return this.reject(stats, 'malformed', tS);
    if (tS > nowS + this.settings.futureToleranceS) return this.reject(stats, 'future', tS);
    spec.model.normalizeInPlace(ws.y);
    const h = this.history;
    if (tS <= h.baseTimeS || (this.initialized && tS < this.newestTimeS - this.settings.horizonS)) {
      return this.reject(stats, 'too-late', tS);
    }
    let p = h.insertionIndex(tS, sensor, ws.y, m);
    if (p < 0) return this.reject(stats, 'duplicate', tS);
    if (h.full) {
      h.evictOldestChunk();
      if (tS <= h.baseTimeS) return this.reject(stats, 'too-late', tS);
      p = h.insertionIndex(tS, sensor, ws.y, m);
    }
    return p === h.count ? this.applyInOrder(sensor, R !== null, tS) : this.applyLate(p, sensor, R !== null, tS);
  }

  /** x̂(t|n) and its covariance for a t at or after the last update, without changing the track. */
  predictInto(tS: number, xOut: Float64Array, POut: Float64Array): boolean {
    if (!this.initialized || !(tS >= this.tS)) return false;
    xOut.set(this.x);
    POut.set(this.P);
    return kalmanPredictInPlace(this.settings.process, tS - this.tS, xOut, POut, this.ws.filter);
  }

  /** Seconds since the last applied measurement at the caller's time (0 when not coasting). */
  coastS(nowS: number): number {
    return this.initialized ? Math.max(0, nowS - this.tS) : Number.NaN;
  }

  /** True when the track has coasted past its limit and no longer claims a valid estimate. */
  isStale(nowS: number): boolean {
    return !this.initialized || this.coastS(nowS) > this.settings.maxCoastS;
  }

  /** x̂(n−L|n) and its covariance from the fixed-lag smoother; returns its time, NaN when unavailable. */
  smoothedInto(xOut: Float64Array, POut: Float64Array): number {
    return this.smoother === null ? Number.NaN : this.smoother.smoothedInto(xOut, POut);
  }

  /** Forgets the estimate and history (an operator's reset); statistics are kept. */
  reset(atTimeS: number): void {
    this.x.set(this.settings.priorMean);
    this.P.set(this.settings.priorCovariance);
    this.initialized = false;
    this.tS = Number.NaN;
    this.history.clear(atTimeS);
    this.smoother?.reset();
  }

  private reject(stats: SensorHealthStats, reason: RejectionReason, tS: number): IngestVerdict {
    stats.recordRejected(reason, Number.isFinite(tS) ? tS : Number.NaN);
    return reason;
  }

  /** Copies y and R into the workspace, checking finiteness, magnitude and R's PSD-ness. */
  private copyMeasurement(y: ArrayLike<number>, R: ArrayLike<number> | null, m: number, defaultR: Float64Array): boolean {
    const ws = this.ws;
    if (y.length !== m) return false;
    const limit = this.settings.maxAbsValue;
    for (let i = 0; i < m; i++) {
      const v = y[i]!;
      if (!(Math.abs(v) <= limit)) return false;
      ws.y[i] = v;
    }
    if (R === null) {
      for (let i = 0; i < m * m; i++) ws.R[i] = defaultR[i]!;
      return true;
    }
    if (R.length !== m * m) return false;
    for (let i = 0; i < m * m; i++) {
      const v = R[i]!;
      if (!Number.isFinite(v)) return false;
      ws.R[i] = v;
    }
    // A reported covariance must be positive definite; Cholesky in the filter scratch tells.
    return choleskyInto(ws.R, m, ws.filter.L);
  }

  private applyInOrder(sensor: number, hasR: boolean, tS: number): IngestVerdict {
    const h = this.history;
    const ws = this.ws;
    if (h.count % h.snapshotEvery === 0) h.writeSnapshot(h.count / h.snapshotEvery, this.tS, this.initialized, this.x, this.P);
    const verdict = this.step(sensor, ws.y, ws.R, tS, true);
    if (verdict === 'applied' || verdict === 'initialized') {
      const m = this.settings.sensors[sensor]!.model.dim;
      h.insertAt(h.count, tS, sensor, ws.y, m, hasR ? ws.R : null);
      this.lastAcceptedS[sensor] = tS;
    } else if (verdict === 'gate') {
      const run = this.stats[sensor]!.consecutiveGateRejections;
      if (run === 1) this.runStartS[sensor] = tS;
      // Only an in-order run triggers the policy: a late outlier says nothing about the present.
      // And only when no other sensor was accepted during the run: one sensor disagreeing
      // while another still agrees with the track is a faulty sensor (health reports it),
      // not a lost track, and restarting would let the faulty sensor drag the estimate.
      if (run >= this.settings.maxConsecutiveRejections && !(this.lastAcceptedOtherS(sensor) >= this.runStartS[sensor]!)) {
        this.onRejectionRun(tS);
      }
    }
    return verdict;
  }

  /** Re-filters from the snapshot before position p (and L steps earlier when smoothing). */
  private applyLate(p: number, sensor: number, hasR: boolean, tS: number): IngestVerdict {
    const h = this.history;
    const ws = this.ws;
    const m = this.settings.sensors[sensor]!.model.dim;
    const lag = this.settings.lagSteps;
    const j0 = Math.floor(Math.max(0, p - lag) / h.snapshotEvery);
    this.restoreSnapshot(j0);
    for (let i = j0 * h.snapshotEvery; i < p; i++) if (!this.replayEntry(i)) return 'numerics';
    // The snapshot before slot p (if p is a multiple of K) is the state just restored.
    if (p % h.snapshotEvery === 0) h.writeSnapshot(p / h.snapshotEvery, this.tS, this.initialized, this.x, this.P);
    let verdict = this.step(sensor, ws.y, ws.R, tS, true);
    if (verdict === 'applied') verdict = 'late-applied';
    if (verdict === 'late-applied' || verdict === 'initialized') {
      h.insertAt(p, tS, sensor, ws.y, m, hasR ? ws.R : null);
      this.stats[sensor]!.recordLate();
      this.counters.refilters += 1;
      p += 1;
    }
    for (let i = p; i < h.count; i++) if (!this.replayEntry(i)) return verdict;
    return verdict;
  }

  private restoreSnapshot(j: number): void {
    const tS = this.history.readSnapshot(j, this.x, this.P);
    this.initialized = !Number.isNaN(tS);
    this.tS = tS;
    if (!this.initialized) {
      this.x.set(this.settings.priorMean);
      this.P.set(this.settings.priorCovariance);
    }
    this.smoother?.reset();
  }

  /** Re-applies stored entry i ungated, refreshing its snapshot; false if the track had to recover. */
  private replayEntry(i: number): boolean {
    const h = this.history;
    const ws = this.ws;
    if (i % h.snapshotEvery === 0) h.writeSnapshot(i / h.snapshotEvery, this.tS, this.initialized, this.x, this.P);
    const sensor = h.sensorAt(i);
    const model = this.settings.sensors[sensor]!.model;
    if (!h.readEntry(i, model.dim, ws.yEntry, ws.REntry)) ws.REntry.set(model.R);
    const verdict = this.step(sensor, ws.yEntry, ws.REntry, h.timeAt(i), false);
    return verdict !== 'numerics';
  }

  /**
   * Initializes from, or predicts to and updates with, one measurement; commits only on success.
   * `live` is false while re-filtering: statistics then stay as first recorded and no gate applies.
   */
  private step(sensor: number, y: Float64Array, R: Float64Array, tS: number, live: boolean): IngestVerdict {
    const spec = this.settings.sensors[sensor]!;
    const stats = this.stats[sensor]!;
    const ws = this.ws;
    if (!this.initialized) {
      ws.x.set(this.settings.priorMean);
      ws.P.set(this.settings.priorCovariance);
      if (!spec.model.initializeInPlace(y, R, ws.x, ws.P)) {
        return live ? this.reject(stats, 'not-initialized', tS) : 'not-initialized';
      }
      this.commit(tS, ws.x, ws.P);
      this.initialized = true;
      this.smoother?.push(tS, ws.x, ws.P, ws.identity, ws.x, ws.P);
      // Counted as accepted like any applied reading; it has no innovation, so no NIS (NaN is
      // kept out of the NIS window) and a zero innovation ratio.
      if (live) stats.recordAccepted(Number.NaN, ws.zeroM, ws.onesM, tS);
      return 'initialized';
    }
    ws.x.set(this.x);
    ws.P.set(this.P);
    const dtS = tS - this.tS;
    if (!kalmanPredictInPlace(this.settings.process, dtS, ws.x, ws.P, ws.filter)) return this.recover(stats, tS, live);
    if (this.smoother !== null) {
      ws.xPredicted.set(ws.x);
      ws.PPredicted.set(ws.P);
      if (dtS === 0) {
        ws.filter.A.set(ws.identity);
        ws.filter.cachedDtS = Number.NaN;
      }
    }
    const gate = live ? spec.gateThreshold : Number.POSITIVE_INFINITY;
    const verdict = this.settings.update(spec.model, y, R, gate, ws.x, ws.P, ws.filter);
    if (verdict === 'numerics') return this.recover(stats, tS, live);
    if (verdict === 'gate') {
      if (live) stats.recordRejected('gate', tS, ws.filter.nis);
      return 'gate';
    }
    this.commit(tS, ws.x, ws.P);
    this.smoother?.push(tS, ws.xPredicted, ws.PPredicted, ws.filter.A, this.x, this.P);
    if (live) stats.recordAccepted(ws.filter.nis, ws.filter.nu, ws.filter.sDiagonal, tS);
    return 'applied';
  }

  private commit(tS: number, x: Float64Array, P: Float64Array): void {
    this.x.set(x);
    this.P.set(P);
    this.tS = tS;
  }

  /** A refused step: count it and start over from the next measurement instead of carrying NaN. */
  private recover(stats: SensorHealthStats, tS: number, live: boolean): IngestVerdict {
    this.counters.numericRefusals += 1;
    if (live) stats.recordRejected('numerics', tS);
    stats.recordRecovered();
    this.reset(Math.max(tS, Number.isNaN(this.tS) ? tS : this.tS));
    return 'numerics';
  }

  private onRejectionRun(tS: number): void {
    if (this.settings.onRejectionRun === 'reinitialize') {
      this.counters.reinitializations += 1;
      this.reset(tS);
      return;
    }
    this.counters.inflations += 1;
    const f = this.settings.inflateFactor;
    for (let i = 0; i < this.P.length; i++) this.P[i] = this.P[i]! * f;
    // The inflation is not in the record, so earlier data can no longer be replayed through it.
    this.history.clear(this.tS);
    this.smoother?.reset();
  }
}
