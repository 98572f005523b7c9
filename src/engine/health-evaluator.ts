/**
 * Turns a track's statistics into a health state with reasons, with hysteresis so alerts do not
 * flap. Evaluated on a fixed tick (the daemon's health interval, or event time in replays), so
 * "entered after N bad evaluations" means N ticks whatever the sensors' rates.
 *
 * Raw conditions and their severity (defaults in the config schema; reasoning in the README):
 * - nis-high / nis-low: the windowed NIS mean (full window) outside its two-sided chi-square
 *   band at the configured confidence; degraded, failed beyond twice the upper bound.
 * - gate-rate: share of gate rejections in the window above gateRateLimit; failed above
 *   2.5 × the limit (most of a sensor's data is refused: it is biased, stuck or faulty).
 * - silent: no message arrived for silentFactor × expectedPeriodS; failed past 3× that.
 * - stale: coasted past coast.maxS (the track no longer claims a valid estimate); failed.
 * - uncertainty: trace(P) or a state's σ above its configured limit; degraded.
 * - numerics: a numerical refusal and recovery since the last evaluation; degraded.
 * - not-initialized: the track has not been able to initialize; degraded.
 */
import type { Track } from '../estimation/track.js';
import type { HealthReason, HealthState } from './health-change.js';

/** Thresholds of the evaluation (from the estimator's health config). */
export interface HealthThresholds {
  readonly gateRateLimit: number;
  readonly silentFactor: number;
  readonly traceLimit?: number;
  /** Per state index, the σ limit (NaN: none). */
  readonly sigmaLimits: Float64Array;
  readonly enterAfter: number;
  readonly leaveAfter: number;
  /** Whether a NIS mean below its band counts (see the health config's flagLowNis). */
  readonly flagLowNis: boolean;
}

const RANK: Record<HealthState, number> = { ok: 0, degraded: 1, failed: 2 };

/** Shared empty reasons: reasons arrays are never mutated once held, so one frozen instance serves all. */
const NO_REASONS = Object.freeze([]) as unknown as HealthReason[];

/** One hysteresis-filtered health state (of a track or of one sensor). */
export class HealthLatch {
  state: HealthState = 'ok';
  /** The reasons of `state` (never mutated once set: snapshots and events hold them). */
  reasons: HealthReason[] = NO_REASONS;
  /** +1 while raw evaluations are worse than `state`, −1 while better, 0 otherwise. */
  private direction = 0;
  private streak = 0;
  /** The state the streak has sustained: least severe seen while worse, most severe while better. */
  private sustained: HealthState = 'ok';
  private sustainedReasons: HealthReason[] = NO_REASONS;

  /**
   * Feeds one raw evaluation; returns true when the reported state changed. A worse state is
   * entered after `enterAfter` consecutive evaluations worse than the current one (the least
   * severe of them is entered), a better one after `leaveAfter` consecutive better ones.
   * `reasons` is read, never kept: the caller may reuse it, and it is copied only when it
   * differs from what the latch holds, so a steady track allocates nothing per evaluation.
   */
  feed(raw: HealthState, reasons: readonly HealthReason[], t: HealthThresholds): boolean {
    const d = Math.sign(RANK[raw] - RANK[this.state]);
    if (d === 0) {
      this.direction = 0;
      this.streak = 0;
      this.reasons = keepOrCopy(this.reasons, reasons);
      return false;
    }
    if (d !== this.direction) {
      this.direction = d;
      this.streak = 0;
      this.sustained = raw;
      this.sustainedReasons = keepOrCopy(this.sustainedReasons, reasons);
    }
    this.streak += 1;
    if (d > 0 ? RANK[raw] < RANK[this.sustained] : RANK[raw] > RANK[this.sustained]) {
      this.sustained = raw;
      this.sustainedReasons = keepOrCopy(this.sustainedReasons, reasons);
    } else if (raw === this.sustained) {
      this.sustainedReasons = keepOrCopy(this.sustainedReasons, reasons);
    }
    if (this.streak < (d > 0 ? t.enterAfter : t.leaveAfter)) return false;
    this.state = this.sustained;
    // The reasons of the newest evaluation at the state entered: stepping down from failed to
    // degraded through some ok evaluations must still say why it is degraded.
    this.reasons = this.state === 'ok' ? NO_REASONS : this.sustainedReasons;
    this.direction = 0;
    this.streak = 0;
    return true;
  }
}

/** `held` when it has the same reasons in the same order as `next`, else a copy of `next`. */
function keepOrCopy(held: HealthReason[], next: readonly HealthReason[]): HealthReason[] {
  if (held.length === next.length) {
    let same = true;
    for (let i = 0; i < next.length; i++) if (held[i] !== next[i]) { same = false; break; }
    if (same) return held;
  }
  return next.length === 0 ? NO_REASONS : next.slice();
}

/** Adds a reason and returns the worse of `state` and `s` (a module function, not a closure, so an evaluation creates no functions). */
function raise(reasons: HealthReason[], state: HealthState, s: HealthState, r: HealthReason): HealthState {
  reasons.push(r);
  return RANK[s] > RANK[state] ? s : state;
}

/** The raw (unfiltered) state and reasons of one sensor of a track at time nowS. */
export function rawSensorHealth(
  track: Track, sensor: number, nowS: number, t: HealthThresholds, reasons: HealthReason[], lastHeardS: number,
): HealthState {
  const stats = track.stats[sensor]!;
  const spec = track.settings.sensors[sensor]!;
  let state: HealthState = 'ok';
  if (stats.windowFill >= stats.windowN) {
    const mean = stats.windowedNisMean;
    if (mean > stats.nisBandUpper) state = raise(reasons, state, mean > 2 * stats.nisBandUpper ? 'failed' : 'degraded', 'nis-high');
    else if (t.flagLowNis && mean < stats.nisBandLower) state = raise(reasons, state, 'degraded', 'nis-low');
  }
  if (stats.gateDecisionCount >= Math.max(4, stats.windowN / 2)) {
    const rate = stats.gateRejectionRate;
    if (rate > t.gateRateLimit) state = raise(reasons, state, rate >= Math.max(0.5, 2.5 * t.gateRateLimit) ? 'failed' : 'degraded', 'gate-rate');
  }
  if (spec.expectedPeriodS !== undefined) {
    // Silence is about arrivals, not event times: a store-and-forward link or a skewed sensor
    // clock must not look like a silent sensor, and a sensor sending only rejects is not silent.
    const since = nowS - lastHeardS;
    const limit = t.silentFactor * spec.expectedPeriodS;
    if (since > limit) state = raise(reasons, state, since > 3 * limit ? 'failed' : 'degraded', 'silent');
  }
  return state;
}

/** The raw state and reasons of the track itself (not of its sensors) at time nowS. */
export function rawTrackHealth(
  track: Track, nowS: number, t: HealthThresholds, numericsSinceLast: boolean, reasons: HealthReason[],
): HealthState {
  let state: HealthState = 'ok';
  if (!track.initialized) {
    state = raise(reasons, state, 'degraded', 'not-initialized');
  } else {
    if (track.isStale(nowS)) state = raise(reasons, state, 'failed', 'stale');
    const n = track.x.length;
    let trace = 0;
    let sigmaOver = false;
    for (let i = 0; i < n; i++) {
      const v = track.P[i * n + i]!;
      trace += v;
      const limit = t.sigmaLimits[i];
      if (limit !== undefined && !Number.isNaN(limit) && Math.sqrt(Math.max(0, v)) > limit) sigmaOver = true;
    }
    if ((t.traceLimit !== undefined && trace > t.traceLimit) || sigmaOver) state = raise(reasons, state, 'degraded', 'uncertainty');
  }
  if (numericsSinceLast) state = raise(reasons, state, 'degraded', 'numerics');
  return state;
}

/** The worse of two states. */
export function worseOf(a: HealthState, b: HealthState): HealthState {
  return RANK[a] >= RANK[b] ? a : b;
}

/** Numeric code of a state for metrics (0 ok, 1 degraded, 2 failed). */
export function healthCode(s: HealthState): number {
  return RANK[s];
}
