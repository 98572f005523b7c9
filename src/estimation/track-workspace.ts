import { FilterWorkspace } from './filters/filter-workspace.js';
import type { TrackSettings } from './track-settings.js';

/**
 * Scratch space shared by all tracks of one estimator (the daemon runs them on one thread), so
 * a track's own memory is only its state, history and statistics.
 */
export class TrackWorkspace {
  readonly filter: FilterWorkspace;
  /** Candidate state: predicted, then updated, committed to the track only when accepted. */
  readonly x: Float64Array;
  readonly P: Float64Array;
  /** Prediction saved for the smoother before the update overwrites it. */
  readonly xPredicted: Float64Array;
  readonly PPredicted: Float64Array;
  /** The measurement being applied and its covariance. */
  readonly y: Float64Array;
  readonly R: Float64Array;
  /** A history entry read back during re-filtering. */
  readonly yEntry: Float64Array;
  readonly REntry: Float64Array;
  readonly identity: Float64Array;
  /** Zeros and ones of measurement length (the innovation and S of an initializing reading). */
  readonly zeroM: Float64Array;
  readonly onesM: Float64Array;
  readonly maxM: number;

  /** Sizes everything from the estimator's settings (setup time). */
  constructor(settings: TrackSettings) {
    const n = settings.process.dim;
    let maxM = 1;
    for (const s of settings.sensors) maxM = Math.max(maxM, s.model.dim);
    this.maxM = maxM;
    this.filter = new FilterWorkspace(n, maxM);
    this.x = new Float64Array(n);
    this.P = new Float64Array(n * n);
    this.xPredicted = new Float64Array(n);
    this.PPredicted = new Float64Array(n * n);
    this.y = new Float64Array(maxM);
    this.R = new Float64Array(maxM * maxM);
    this.yEntry = new Float64Array(maxM);
    this.REntry = new Float64Array(maxM * maxM);
    this.zeroM = new Float64Array(maxM);
    this.onesM = new Float64Array(maxM).fill(1);
    this.identity = new Float64Array(n * n);
    for (let i = 0; i < n; i++) this.identity[i * n + i] = 1;
  }
}
