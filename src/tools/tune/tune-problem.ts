/**
 * A tuning problem: one estimator's config prepared for tuning, its free parameters with start
 * values and bounds, and the recording decoded once. `evaluateLikelihood` turns a candidate θ
 * into ℓ(θ) by patching the config, building a fresh estimator from it and running new tracks.
 */
import type { ConfigIssue } from '../../config/config-error.js';
import { buildEstimatorRuntime } from '../../engine/estimator-runtime.js';
import { patchEstimatorConfig, parameterValue, tuningVariant, type FrozenEstimatorConfig } from './config-patch.js';
import type { DecodedRecording } from './entity-measurements.js';
import { innovationsLogLikelihood, type LikelihoodResult } from './innovations-likelihood.js';

/** Default bounds, as a factor either side of the configured value: six decades. */
export const DEFAULT_BOUND_FACTOR = 1e6;

/** One free parameter of a problem. */
export interface FreeParameter {
  /** Path into the estimator config, e.g. `model.q`. */
  readonly path: string;
  /** The value in the config as loaded. */
  readonly configured: number;
  /** Where the search starts (the configured value unless overridden, clamped into the bounds). */
  readonly start: number;
  readonly min: number;
  readonly max: number;
}

/** Everything a fit needs. */
export interface TuneProblem {
  /** The estimator config with the gate off and smoothing off (see `tuningVariant`). */
  readonly base: FrozenEstimatorConfig;
  readonly free: readonly FreeParameter[];
  readonly recording: DecodedRecording;
  /** Nelder–Mead iteration budget from the tune section. */
  readonly maxIterations: number;
}

/** The outcome of preparing a problem. */
export type TuneProblemResult = { readonly ok: true; readonly problem: TuneProblem } | { readonly ok: false; readonly issues: readonly ConfigIssue[] };

/**
 * Prepares a problem from a validated estimator config that has a tune section, its decoded
 * recording (a RecordingDecoder or decodeRecording on a runtime of this config: the noise
 * parameters do not change decoding) and optional start values by path (each must be a free
 * path and a positive number).
 */
export function buildTuneProblem(
  config: FrozenEstimatorConfig,
  recording: DecodedRecording,
  starts: ReadonlyMap<string, number> = new Map(),
): TuneProblemResult {
  const tune = config.tune;
  if (tune === undefined) return { ok: false, issues: [{ path: 'tune', message: 'not set; name the parameters to fit in tune.free' }] };
  const issues: ConfigIssue[] = [];
  for (const [path, value] of starts) {
    if (!tune.free.some((f) => f.path === path)) issues.push({ path, message: 'is not a free parameter of tune.free' });
    else if (!(value > 0) || !Number.isFinite(value)) issues.push({ path, message: 'expected a positive start value' });
  }
  const variant = tuningVariant(config);
  if (!variant.ok) return variant;
  if (issues.length > 0) return { ok: false, issues };
  const free = tune.free.map((f): FreeParameter => {
    const configured = parameterValue(config, f.path);
    const min = f.min ?? configured / DEFAULT_BOUND_FACTOR;
    const max = f.max ?? configured * DEFAULT_BOUND_FACTOR;
    const start = Math.min(max, Math.max(min, starts.get(f.path) ?? configured));
    return { path: f.path, configured, start, min, max };
  });
  return { ok: true, problem: { base: variant.config, free, recording, maxIterations: tune.maxIterations } };
}

/** ℓ(θ) and its counts for parameter values θ in the order of `problem.free`; null when the patched config is invalid. */
export function evaluateLikelihood(problem: TuneProblem, theta: ArrayLike<number>): LikelihoodResult | null {
  const values = new Map(problem.free.map((f, i) => [f.path, theta[i]!]));
  const patched = patchEstimatorConfig(problem.base, values);
  if (!patched.ok) return null;
  return innovationsLogLikelihood(buildEstimatorRuntime(patched.config).estimator, problem.recording.entities);
}

/** ℓ as a function of u = log θ, −Infinity where the candidate is invalid (for the search and the curvature). */
export function logLikelihoodOfLog(problem: TuneProblem): (u: Float64Array) => number {
  return (u) => evaluateLikelihood(problem, Float64Array.from(u, Math.exp))?.logLikelihood ?? Number.NEGATIVE_INFINITY;
}
