/**
 * Filter consistency against ground truth (the simulator's `sim/truth/...` messages): at each
 * truth sample the track is predicted to the truth time, and the normalized estimation error
 * squared NEES = eᵀ P⁻¹ e (e = x̂ − x over the states the truth names) is tallied. For a
 * consistent filter NEES ~ χ²(n): about 95 % of samples lie below the 95 % quantile, and the
 * average of N samples lies in the two-sided band [χ²inv(0.025, Nn)/N, χ²inv(0.975, Nn)/N]
 * (Bar-Shalom, Li, Kirubarajan, Estimation with Applications to Tracking and Navigation, 2001,
 * §5.4.2; from memory). Samples of one run are correlated in time, so the band is a guide,
 * not an exact test. RMSE per state comes from the same predicted estimates.
 */
import { chiSquareQuantile } from '../estimation/filters/chi-square.js';
import { nisBand } from '../estimation/filters/consistency-band.js';
import { choleskyInto, mahalanobisSquared } from '../estimation/linalg/cholesky.js';
import type { Track } from '../estimation/track.js';

/** The truth part of a replay summary for one estimator. */
export interface TruthSummary {
  /** Truth samples scored (the track was initialized and not ahead of the truth time). */
  readonly samples: number;
  /** Truth samples that could not be scored (no track yet, or the truth older than the track). */
  readonly skipped: number;
  /** States compared (degrees of freedom of each NEES), the largest seen. */
  readonly dof: number;
  /** χ²(dof) 95 % quantile each NEES is compared against. */
  readonly quantile: number;
  /** Share of samples with NEES below the quantile (≈ 0.95 when consistent). */
  readonly shareBelowQuantile: number;
  readonly meanNees: number;
  /** 95 % two-sided band of the mean NEES over `samples` samples. */
  readonly band: readonly [number, number];
  /** Root-mean-square error per compared state, in the state's unit. */
  readonly rmse: Readonly<Record<string, number>>;
}

/** One scored truth sample (kept for the report). */
export interface TruthSample {
  readonly nees: number;
  readonly dof: number;
}

const QUANTILE_P = 0.95;

/** Tallies NEES and squared errors of one estimator's tracks against truth samples. */
export class TruthTally {
  private readonly x: Float64Array;
  private readonly P: Float64Array;
  private readonly sub: Float64Array;
  private readonly L: Float64Array;
  private readonly e: Float64Array;
  private readonly scratch: Float64Array;
  private readonly index: Int32Array;
  private readonly squaredError: Float64Array;
  private readonly errorCount: Float64Array;
  private readonly quantiles = new Map<number, number>();
  private samples = 0;
  private skipped = 0;
  private below = 0;
  private neesSum = 0;
  private dofSum = 0;
  private maxDof = 0;

  /** Buffers for n states named stateNames. */
  constructor(private readonly stateNames: readonly string[]) {
    const n = stateNames.length;
    this.x = new Float64Array(n);
    this.P = new Float64Array(n * n);
    this.sub = new Float64Array(n * n);
    this.L = new Float64Array(n * n);
    this.e = new Float64Array(n);
    this.scratch = new Float64Array(n);
    this.index = new Int32Array(n);
    this.squaredError = new Float64Array(n);
    this.errorCount = new Float64Array(n);
  }

  /**
   * Scores one truth sample (field values by state name, at time tS) against the track's
   * prediction to tS; returns the sample, or null when it was skipped.
   */
  add(track: Track | undefined, tS: number, truth: Readonly<Record<string, unknown>>): TruthSample | null {
    const n = this.stateNames.length;
    if (track === undefined || !track.predictInto(tS, this.x, this.P)) {
      this.skipped += 1;
      return null;
    }
    let k = 0;
    for (let i = 0; i < n; i++) {
      const v = truth[this.stateNames[i]!];
      if (typeof v !== 'number' || !Number.isFinite(v)) continue;
      this.index[k] = i;
      this.e[k] = this.x[i]! - v;
      k += 1;
    }
    if (k === 0) {
      this.skipped += 1;
      return null;
    }
    for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) this.sub[a * k + b] = this.P[this.index[a]! * n + this.index[b]!]!;
    if (!choleskyInto(this.sub, k, this.L)) {
      this.skipped += 1;
      return null;
    }
    const nees = mahalanobisSquared(this.L, k, this.e, this.scratch);
    this.samples += 1;
    this.neesSum += nees;
    this.dofSum += k;
    this.maxDof = Math.max(this.maxDof, k);
    if (nees < this.quantile(k)) this.below += 1;
    for (let a = 0; a < k; a++) {
      const i = this.index[a]!;
      this.squaredError[i] = this.squaredError[i]! + this.e[a]! * this.e[a]!;
      this.errorCount[i] = this.errorCount[i]! + 1;
    }
    return { nees, dof: k };
  }

  /** The summary so far, or null when no truth sample reached this estimator. */
  summary(): TruthSummary | null {
    if (this.samples + this.skipped === 0) return null;
    const rmse: Record<string, number> = {};
    this.stateNames.forEach((name, i) => {
      if (this.errorCount[i]! > 0) rmse[name] = Math.sqrt(this.squaredError[i]! / this.errorCount[i]!);
    });
    const meanDof = this.samples > 0 ? Math.round(this.dofSum / this.samples) : 0;
    const band = this.samples > 0 && meanDof > 0 ? nisBand(meanDof, this.samples, 0.95) : { lower: Number.NaN, upper: Number.NaN };
    return {
      samples: this.samples,
      skipped: this.skipped,
      dof: this.maxDof,
      quantile: this.maxDof > 0 ? this.quantile(this.maxDof) : Number.NaN,
      shareBelowQuantile: this.samples > 0 ? this.below / this.samples : Number.NaN,
      meanNees: this.samples > 0 ? this.neesSum / this.samples : Number.NaN,
      band: [band.lower, band.upper],
      rmse,
    };
  }

  private quantile(dof: number): number {
    let q = this.quantiles.get(dof);
    if (q === undefined) {
      q = chiSquareQuantile(QUANTILE_P, dof);
      this.quantiles.set(dof, q);
    }
    return q;
  }
}
