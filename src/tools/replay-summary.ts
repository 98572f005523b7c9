/**
 * What a replay counts, per estimator and sensor: accepted, late and rejected measurements by
 * reason, and windowed-NIS consistency — the share of full, non-overlapping windows of
 * health.windowN NIS values (per sensor and entity) whose mean lies in the two-sided chi-square
 * band at health.confidence (Bar-Shalom, Li, Kirubarajan 2001, §5.4.2; from memory). The
 * tallies are mutable counters fed by the replay session; `summary()` freezes them as JSON-able
 * data.
 */
import { nisBand } from '../estimation/filters/consistency-band.js';
import type { TruthSummary } from './truth-consistency.js';

/** One sensor's figures. */
export interface SensorSummary {
  readonly sensor: string;
  readonly accepted: number;
  /** Accepted out of order (re-filtered from history). */
  readonly late: number;
  /** Rejected as older than the late-data horizon (also counted in `rejected`). */
  readonly tooLate: number;
  /** Rejections by reason (gate, too-late, duplicate, not-json, ...), reasons in first-seen order. */
  readonly rejected: Readonly<Record<string, number>>;
  readonly nisWindows: {
    readonly windowN: number;
    readonly confidence: number;
    readonly band: readonly [number, number];
    readonly full: number;
    readonly inside: number;
    /** inside / full; null when no window filled. */
    readonly share: number | null;
  };
}

/** One estimator's figures. */
export interface EstimatorSummary {
  readonly estimator: string;
  readonly entities: number;
  readonly estimates: number;
  readonly healthChanges: number;
  /** Measurements the batch smoother's re-filter refused (0 without --smooth). */
  readonly refilterRefusals: number;
  readonly sensors: readonly SensorSummary[];
  /** Present when the recording carried ground truth for this estimator's entities. */
  readonly truth: TruthSummary | null;
}

/** The whole replay's figures. */
export interface ReplaySummary {
  readonly messages: number;
  readonly truthMessages: number;
  /** Messages no sensor's topic matched. */
  readonly unrouted: number;
  /** Arrival times of the first and last message, epoch ms (null when there were none). */
  readonly firstMs: number | null;
  readonly lastMs: number | null;
  /** True when the replay was stopped before the end of its input. */
  readonly interrupted: boolean;
  readonly estimators: readonly EstimatorSummary[];
}

/** Mutable counters of one sensor. */
export class SensorTally {
  accepted = 0;
  late = 0;
  full = 0;
  inside = 0;
  readonly rejected = new Map<string, number>();
  readonly lower: number;
  readonly upper: number;
  /** `{"sensor":"name","t":` — the head of this sensor's entries in an estimate's nis list. */
  readonly nisFragment: string;

  /** Counters for one sensor of measurement dimension m. */
  constructor(readonly name: string, readonly index: number, readonly dim: number, readonly windowN: number, readonly confidence: number) {
    const band = nisBand(dim, windowN, confidence);
    this.lower = band.lower;
    this.upper = band.upper;
    this.nisFragment = `{"sensor":${JSON.stringify(name)},"t":`;
  }

  /** Counts a rejection. */
  reject(reason: string): void {
    this.rejected.set(reason, (this.rejected.get(reason) ?? 0) + 1);
  }

  /** Scores a window that just filled (its mean NIS). */
  scoreWindow(mean: number): void {
    this.full += 1;
    if (mean >= this.lower && mean <= this.upper) this.inside += 1;
  }

  /** The frozen figures. */
  summary(): SensorSummary {
    return {
      sensor: this.name,
      accepted: this.accepted,
      late: this.late,
      tooLate: this.rejected.get('too-late') ?? 0,
      rejected: Object.fromEntries(this.rejected),
      nisWindows: {
        windowN: this.windowN,
        confidence: this.confidence,
        band: [this.lower, this.upper],
        full: this.full,
        inside: this.inside,
        share: this.full > 0 ? this.inside / this.full : null,
      },
    };
  }
}
