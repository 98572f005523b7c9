/**
 * Nelder–Mead simplex minimization with box bounds and restarts, as a generator so that a
 * caller can show progress and stop between iterations without the search knowing about I/O.
 *
 * Coefficients are the standard ones: reflection ρ = 1, expansion χ = 2, contraction γ = ½,
 * shrink σ = ½, with the acceptance rules of Lagarias, Reeds, Wright & Wright, "Convergence
 * properties of the Nelder–Mead simplex method in low dimensions", SIAM J. Optim. 9(1), 1998.
 * Trial points are clamped into the box. A converged simplex can still sit on a false minimum
 * (the method is not guaranteed to converge to a stationary point), so the search restarts from
 * the best vertex with a fresh simplex until a restart no longer improves f by more than fTol.
 */

/** Search settings; every field has a default. */
export interface NelderMeadOptions {
  /** Lower and upper bounds per coordinate (default unbounded). */
  readonly lower?: ArrayLike<number>;
  readonly upper?: ArrayLike<number>;
  /** Edge length of each starting simplex along every coordinate (default 0.5). */
  readonly initialStep?: number;
  /** Iteration budget shared by all restarts (default 400). */
  readonly maxIterations?: number;
  /** Converged when the spread of f over the simplex is at most fTol (default 1e-8) … */
  readonly fTol?: number;
  /** … and every vertex lies within xTol of the best in each coordinate (default 1e-6). */
  readonly xTol?: number;
  /** Restarts after the first convergence, at most (default 3). */
  readonly maxRestarts?: number;
}

/** The state after one iteration. */
export interface NelderMeadProgress {
  readonly iteration: number;
  readonly evaluations: number;
  readonly restarts: number;
  /** Best point so far and its f (a copy the caller may keep). */
  readonly bestX: Float64Array;
  readonly bestF: number;
}

/** The final state; `converged` is false when the budget ran out first. */
export interface NelderMeadResult extends NelderMeadProgress {
  readonly converged: boolean;
}

const RHO = 1;
const CHI = 2;
const GAMMA = 0.5;
const SIGMA = 0.5;

/**
 * Minimizes f from x0, yielding after every iteration; the return value is the result. A
 * non-finite f counts as +Infinity, so a candidate outside f's domain is simply worse.
 */
export function* nelderMeadSteps(
  f: (x: Float64Array) => number,
  x0: ArrayLike<number>,
  options: NelderMeadOptions = {},
): Generator<NelderMeadProgress, NelderMeadResult, void> {
  const n = x0.length;
  if (n < 1) throw new RangeError('nelderMead needs at least one coordinate');
  const lower = Float64Array.from({ length: n }, (_, i) => options.lower?.[i] ?? Number.NEGATIVE_INFINITY);
  const upper = Float64Array.from({ length: n }, (_, i) => options.upper?.[i] ?? Number.POSITIVE_INFINITY);
  const step = options.initialStep ?? 0.5;
  const maxIterations = options.maxIterations ?? 400;
  const fTol = options.fTol ?? 1e-8;
  const xTol = options.xTol ?? 1e-6;
  const maxRestarts = options.maxRestarts ?? 3;
  let evaluations = 0;
  const clamp = (x: Float64Array): Float64Array => {
    for (let i = 0; i < n; i++) x[i] = Math.min(upper[i]!, Math.max(lower[i]!, x[i]!));
    return x;
  };
  const value = (x: Float64Array): number => {
    evaluations += 1;
    const v = f(x);
    return Number.isFinite(v) ? v : Number.POSITIVE_INFINITY;
  };
  /** A fresh simplex around x: one step along each coordinate, inward where a bound is near. */
  const simplexAround = (x: Float64Array): { xs: Float64Array[]; fs: number[] } => {
    const xs = [clamp(Float64Array.from(x))];
    for (let i = 0; i < n; i++) {
      const v = Float64Array.from(xs[0]!);
      v[i] = v[i]! + step <= upper[i]! ? v[i]! + step : v[i]! - step;
      xs.push(clamp(v));
    }
    return { xs, fs: xs.map(value) };
  };
  let { xs, fs } = simplexAround(Float64Array.from(x0));
  let iteration = 0;
  let restarts = 0;
  let lastConvergedF = Number.POSITIVE_INFINITY;
  const centroid = new Float64Array(n);
  const along = (t: number): Float64Array => {
    const worst = xs[n]!;
    return clamp(Float64Array.from(centroid, (c, i) => c + t * (c - worst[i]!)));
  };
  const progress = (): NelderMeadProgress => ({ iteration, evaluations, restarts, bestX: Float64Array.from(xs[0]!), bestF: fs[0]! });
  for (;;) {
    const order = fs.map((_, i) => i).sort((a, b) => fs[a]! - fs[b]!);
    xs = order.map((i) => xs[i]!);
    fs = order.map((i) => fs[i]!);
    if (converged(xs, fs, fTol, xTol)) {
      const improved = lastConvergedF - fs[0]! > fTol;
      lastConvergedF = Math.min(lastConvergedF, fs[0]!);
      if (!improved || restarts >= maxRestarts) return { ...progress(), converged: true };
      restarts += 1;
      ({ xs, fs } = simplexAround(xs[0]!));
      continue;
    }
    if (iteration >= maxIterations) return { ...progress(), converged: false };
    iteration += 1;
    centroid.fill(0);
    for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) centroid[i] = centroid[i]! + xs[j]![i]! / n;
    const fBest = fs[0]!;
    const fNext = fs[n - 1]!;
    const fWorst = fs[n]!;
    const xr = along(RHO);
    const fr = value(xr);
    if (fr < fBest) {
      const xe = along(RHO * CHI);
      const fe = value(xe);
      replaceWorst(xs, fs, fe < fr ? xe : xr, Math.min(fe, fr));
    } else if (fr < fNext) {
      replaceWorst(xs, fs, xr, fr);
    } else {
      // Outside contraction when the reflection beat the worst vertex, inside otherwise.
      const outside = fr < fWorst;
      const xc = along(outside ? RHO * GAMMA : -GAMMA);
      const fc = value(xc);
      if (outside ? fc <= fr : fc < fWorst) {
        replaceWorst(xs, fs, xc, fc);
      } else {
        for (let j = 1; j <= n; j++) {
          xs[j] = clamp(Float64Array.from(xs[j]!, (v, i) => xs[0]![i]! + SIGMA * (v - xs[0]![i]!)));
          fs[j] = value(xs[j]!);
        }
      }
    }
    yield progress();
  }
}

function replaceWorst(xs: Float64Array[], fs: number[], x: Float64Array, fx: number): void {
  xs[xs.length - 1] = x;
  fs[fs.length - 1] = fx;
}

function converged(xs: readonly Float64Array[], fs: readonly number[], fTol: number, xTol: number): boolean {
  if (!(fs[fs.length - 1]! - fs[0]! <= fTol)) return false;
  const best = xs[0]!;
  return xs.every((x) => x.every((v, i) => Math.abs(v - best[i]!) <= xTol));
}

/** Runs `nelderMeadSteps` to the end and returns its result. */
export function nelderMead(f: (x: Float64Array) => number, x0: ArrayLike<number>, options: NelderMeadOptions = {}): NelderMeadResult {
  const steps = nelderMeadSteps(f, x0, options);
  for (;;) {
    const next = steps.next();
    if (next.done === true) return next.value;
  }
}
