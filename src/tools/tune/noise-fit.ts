/**
 * The maximum-likelihood fit of a tuning problem: Nelder–Mead on −ℓ over u = log θ inside the
 * log bounds, then curvature intervals and the NIS test at the start and at the fit. A
 * generator, so the caller shows progress and may stop early and summarize the best so far.
 */
import { curvatureIntervals, type CurvatureResult } from './curvature-intervals.js';
import type { LikelihoodResult } from './innovations-likelihood.js';
import { nelderMeadSteps, type NelderMeadProgress } from './nelder-mead.js';
import { nisConsistency, type NisConsistency } from './nis-consistency.js';
import { evaluateLikelihood, logLikelihoodOfLog, type TuneProblem } from './tune-problem.js';

/** Search tolerances: ℓ to 1e-5 and log θ to 1e-5 (θ to 0.001 %), far below the intervals' widths. */
const F_TOL = 1e-4;
const X_TOL = 1e-4;
/** First simplex edge in log θ: a factor e^0.7 ≈ 2, so a start off by 5 is a few steps away. */
const INITIAL_STEP = 0.7;

/** ℓ and the NIS test at one θ. */
export interface FitPoint {
  readonly theta: Float64Array;
  readonly likelihood: LikelihoodResult | null;
  readonly nis: NisConsistency | null;
}

/** A finished (or stopped) fit. */
export interface NoiseFit {
  readonly start: FitPoint;
  readonly fitted: FitPoint;
  /** Curvature intervals at the fit; null when not computed (a stopped run). */
  readonly intervals: CurvatureResult | null;
  /** Per parameter: the fit lies on (within 1e-6 in log θ of) its min or max. */
  readonly atBound: readonly boolean[];
  readonly converged: boolean;
  readonly stopped: boolean;
  readonly iterations: number;
  /** Likelihood evaluations by the search and the curvature. */
  readonly evaluations: number;
}

/** What `fitNoiseParameters` yields after each search iteration. */
export interface FitProgress extends NelderMeadProgress {
  readonly maxIterations: number;
  /** θ of the best vertex. */
  readonly bestTheta: Float64Array;
  /** ℓ at the best vertex. */
  readonly bestLogLikelihood: number;
}

function fitPoint(problem: TuneProblem, theta: Float64Array): FitPoint {
  const likelihood = evaluateLikelihood(problem, theta);
  const nis = likelihood === null ? null : nisConsistency(likelihood.nisSum, likelihood.updates, likelihood.components);
  return { theta, likelihood, nis };
}

/**
 * Summarizes a fit at `fittedTheta` (e.g. the best vertex of a stopped search); computes the
 * intervals unless `stopped`.
 */
export function summarizeFit(
  problem: TuneProblem,
  fittedTheta: Float64Array,
  search: { readonly iterations: number; readonly evaluations: number; readonly converged: boolean; readonly stopped: boolean },
): NoiseFit {
  const uHat = Float64Array.from(fittedTheta, Math.log);
  const intervals = search.stopped ? null : curvatureIntervals(logLikelihoodOfLog(problem), uHat);
  const atBound = problem.free.map((f, i) => Math.abs(uHat[i]! - Math.log(f.min)) < 1e-6 || Math.abs(uHat[i]! - Math.log(f.max)) < 1e-6);
  return {
    start: fitPoint(problem, Float64Array.from(problem.free, (f) => f.start)),
    fitted: fitPoint(problem, fittedTheta),
    intervals,
    atBound,
    converged: search.converged,
    stopped: search.stopped,
    iterations: search.iterations,
    evaluations: search.evaluations + (intervals?.evaluations ?? 0),
  };
}

/** Fits the problem, yielding progress after every search iteration; returns the summary. */
export function* fitNoiseParameters(problem: TuneProblem): Generator<FitProgress, NoiseFit, void> {
  const logLik = logLikelihoodOfLog(problem);
  const steps = nelderMeadSteps((u) => -logLik(u), Float64Array.from(problem.free, (f) => Math.log(f.start)), {
    lower: problem.free.map((f) => Math.log(f.min)),
    upper: problem.free.map((f) => Math.log(f.max)),
    initialStep: INITIAL_STEP,
    maxIterations: problem.maxIterations,
    fTol: F_TOL,
    xTol: X_TOL,
  });
  for (;;) {
    const next = steps.next();
    if (next.done === true) {
      const r = next.value;
      return summarizeFit(problem, Float64Array.from(r.bestX, Math.exp), { ...r, iterations: r.iteration, stopped: false });
    }
    const p = next.value;
    yield { ...p, maxIterations: problem.maxIterations, bestTheta: Float64Array.from(p.bestX, Math.exp), bestLogLikelihood: -p.bestF };
  }
}
