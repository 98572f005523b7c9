/**
 * First-order Gauss–Markov block: dx = −x/τ dt + dβ, a stationary exponentially correlated
 * process with time constant τ and steady-state standard deviation σ (spectral density
 * q = 2σ²/τ). Exact discretization per state: Φ = e^(−T/τ), Qd = σ²(1 − e^(−2T/τ))
 * (Brown & Hwang, "Introduction to Random Signals and Applied Kalman Filtering", 4th ed. 2012,
 * ch. 3). Suits a sensor bias that wanders but stays within about ±σ.
 */
import type { ProcessModel } from './process-model.js';
import { checkPerAxis, checkStateNames } from './parameter-checks.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';

/** Configuration of a GaussMarkovModel. */
export interface GaussMarkovModelOptions {
  /** One name per state; default `['bias']`. */
  readonly stateNames?: readonly string[];
  /** Correlation time constant τ in seconds, per state or one value for all. */
  readonly tauS: number | readonly number[];
  /** Steady-state standard deviation σ in state units, per state or one value for all. */
  readonly sigma: number | readonly number[];
}

/** n independent first-order Gauss–Markov processes with exact discretization. */
export class GaussMarkovModel implements ProcessModel {
  /** Number of states. */
  readonly dim: number;
  /** State names. */
  readonly stateNames: readonly string[];
  /** Time constant per state, seconds. */
  readonly tauS: Float64Array;
  /** Steady-state standard deviation per state, state units. */
  readonly sigma: Float64Array;

  /** Validates names (unique), τ and σ (positive, finite). */
  constructor(options: GaussMarkovModelOptions) {
    this.stateNames = checkStateNames('stateNames', options.stateNames ?? ['bias']);
    this.dim = this.stateNames.length;
    this.tauS = checkPerAxis('tauS', options.tauS, this.dim);
    this.sigma = checkPerAxis('sigma', options.sigma, this.dim);
  }

  /** Writes the diagonal Φ(dtS) and Qd(dtS) into the caller's buffers; dtS in seconds, ≥ 0. */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    const n = this.dim;
    if (!isUsableStepS(dtS)) return writeNaNStepInto(n, A, Q);
    writeIdentityStepInto(n, A, Q);
    for (let i = 0; i < n; i++) {
      const tau = this.tauS[i]!;
      const s = this.sigma[i]!;
      A[i * n + i] = Math.exp(-dtS / tau);
      // −expm1 keeps 1 − e^(−2T/τ) accurate when T ≪ τ, where the plain difference cancels.
      Q[i * n + i] = -s * s * Math.expm1((-2 * dtS) / tau);
    }
  }
}
