/**
 * Random-walk block: each state is the integral of white noise of spectral density q, so
 * A = I and Q = diag(q·T), exactly. Suits slowly drifting quantities with no known dynamics.
 */
import type { ProcessModel } from './process-model.js';
import { checkPerAxis, checkStateNames } from './parameter-checks.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';

/** Configuration of a RandomWalkModel. */
export interface RandomWalkModelOptions {
  /** One name per state; default `['x']`. */
  readonly stateNames?: readonly string[];
  /** Spectral density q per state (state unit²/s), or one value for all states. */
  readonly spectralDensity: number | readonly number[];
}

/** n-D random walk with exact discretization A = I, Q = diag(q·dt). */
export class RandomWalkModel implements ProcessModel {
  /** Number of states. */
  readonly dim: number;
  /** State names. */
  readonly stateNames: readonly string[];
  /** Spectral density per state (state unit²/s). */
  readonly spectralDensity: Float64Array;

  /** Validates names (unique) and q (positive, finite). */
  constructor(options: RandomWalkModelOptions) {
    this.stateNames = checkStateNames('stateNames', options.stateNames ?? ['x']);
    this.dim = this.stateNames.length;
    this.spectralDensity = checkPerAxis('spectralDensity', options.spectralDensity, this.dim);
  }

  /** Writes A = I and Q = diag(q·dtS) into the caller's buffers; dtS in seconds, ≥ 0. */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    const n = this.dim;
    if (!isUsableStepS(dtS)) return writeNaNStepInto(n, A, Q);
    writeIdentityStepInto(n, A, Q);
    for (let i = 0; i < n; i++) Q[i * n + i] = this.spectralDensity[i]! * dtS;
  }
}
