/**
 * A process model: how the state evolves between two time stamps.
 *
 * Every model, discrete or continuous, answers the same question for the filter: given a step of
 * dtS seconds, what are the transition A(dt) and the process-noise covariance Q(dt) of
 * x(n+1) = A x(n) + w, cov(w) = Q. The pipeline never asks what kind of model it holds.
 */
export interface ProcessModel {
  /** Number of states P. */
  readonly dim: number;
  /** One name per state component, e.g. `level`, `level_rate`, `pressure_bias`. */
  readonly stateNames: readonly string[];
  /**
   * Writes A(dtS) and Q(dtS) (both dim×dim, row-major) into caller-owned buffers.
   * dtS ≥ 0; dtS = 0 must give A = I and Q = 0.
   */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void;
  /**
   * Known-input term G·u added to the predicted mean, when the model has an input (explicit
   * discrete models with G); absent otherwise.
   */
  readonly inputDim?: number;
  /** Adds the effect of the known input u over dtS to x in place. */
  applyInputInPlace?(dtS: number, u: Float64Array, x: Float64Array): void;
}
