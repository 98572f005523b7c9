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

/** f restricted to the box: every point is clamped before it is evaluated, and counted. */
class BoxedObjective {
  evaluations = 0;
  constructor(
    private readonly f: (x: Float64Array) => number,
    readonly lower: Float64Array,
    readonly upper: Float64Array,
  ) {}

  clamp(x: Float64Array): Float64Array {
    for (let i = 0; i < x.length; i++) x[i] = Math.min(this.upper[i]!, Math.max(this.lower[i]!, x[i]!));
    return x;
  }

  /** f at x (clamped in place); a non-finite value counts as +Infinity. */
  value(x: Float64Array): number {
    this.evaluations += 1;
    const v = this.f(this.clamp(x));
    return Number.isFinite(v) ? v : Number.POSITIVE_INFINITY;
  }
}

/** Vertices and their values, kept sorted best first after `sortSimplex`. */
interface Simplex {
  xs: Float64Array[];
  fs: number[];
}

/** A fresh simplex around x: one step along each coordinate, inward where the upper bound is near. */
function simplexAround(obj: BoxedObjective, x: Float64Array, step: number): Simplex {
  const xs = [obj.clamp(Float64Array.from(x))];
  for (let i = 0; i < x.length; i++) {
    const v = Float64Array.from(xs[0]!);
    v[i] = v[i]! + step <= obj.upper[i]! ? v[i]! + step : v[i]! - step;
    xs.push(obj.clamp(v));
  }
  return { xs, fs: xs.map((v) => obj.value(v)) };
}

function sortSimplex(s: Simplex): void {
  const order = s.fs.map((_, i) => i).sort((a, b) => s.fs[a]! - s.fs[b]!);
  s.xs = order.map((i) => s.xs[i]!);
  s.fs = order.map((i) => s.fs[i]!);
}

function converged(s: Simplex, fTol: number, xTol: number): boolean {
  if (!(s.fs[s.fs.length - 1]! - s.fs[0]! <= fTol)) return false;
  const best = s.xs[0]!;
  return s.xs.every((x) => x.every((v, i) => Math.abs(v - best[i]!) <= xTol));
}

/** One iteration on a sorted simplex: reflect, expand, contract outside or inside, or shrink. */
function iterate(obj: BoxedObjective, s: Simplex): void {
  const n = s.xs.length - 1;
  const worst = s.xs[n]!;
  const centroid = new Float64Array(n);
  for (let j = 0; j < n; j++) for (let i = 0; i < n; i++) centroid[i] = centroid[i]! + s.xs[j]![i]! / n;
  const along = (t: number): Float64Array => Float64Array.from(centroid, (c, i) => c + t * (c - worst[i]!));
  const replaceWorst = (x: Float64Array, fx: number): void => {
    s.xs[n] = x;
    s.fs[n] = fx;
  };
  const xr = along(RHO);
  const fr = obj.value(xr);
  if (fr < s.fs[0]!) {
    const xe = along(RHO * CHI);
    const fe = obj.value(xe);
    return fe < fr ? replaceWorst(xe, fe) : replaceWorst(xr, fr);
  }
  if (fr < s.fs[n - 1]!) return replaceWorst(xr, fr);
  // Outside contraction when the reflection beat the worst vertex, inside otherwise.
  const outside = fr < s.fs[n]!;
  const xc = along(outside ? RHO * GAMMA : -GAMMA);
  const fc = obj.value(xc);
  if (outside ? fc <= fr : fc < s.fs[n]!) return replaceWorst(xc, fc);
  const best = s.xs[0]!;
  for (let j = 1; j <= n; j++) {
    s.xs[j] = Float64Array.from(s.xs[j]!, (v, i) => best[i]! + SIGMA * (v - best[i]!));
    s.fs[j] = obj.value(s.xs[j]!);
  }
}

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
  const obj = new BoxedObjective(
    f,
    Float64Array.from({ length: n }, (_, i) => options.lower?.[i] ?? Number.NEGATIVE_INFINITY),
    Float64Array.from({ length: n }, (_, i) => options.upper?.[i] ?? Number.POSITIVE_INFINITY),
  );
  const step = options.initialStep ?? 0.5;
  const maxIterations = options.maxIterations ?? 400;
  const fTol = options.fTol ?? 1e-8;
  const xTol = options.xTol ?? 1e-6;
  const maxRestarts = options.maxRestarts ?? 3;
  const s = simplexAround(obj, Float64Array.from(x0), step);
  let iteration = 0;
  let restarts = 0;
  let lastConvergedF = Number.POSITIVE_INFINITY;
  const progress = (): NelderMeadProgress => ({
    iteration, evaluations: obj.evaluations, restarts, bestX: Float64Array.from(s.xs[0]!), bestF: s.fs[0]!,
  });
  for (;;) {
    sortSimplex(s);
    if (converged(s, fTol, xTol)) {
      const improved = lastConvergedF - s.fs[0]! > fTol;
      lastConvergedF = Math.min(lastConvergedF, s.fs[0]!);
      if (!improved || restarts >= maxRestarts) return { ...progress(), converged: true };
      restarts += 1;
      Object.assign(s, simplexAround(obj, s.xs[0]!, step));
      continue;
    }
    if (iteration >= maxIterations) return { ...progress(), converged: false };
    iteration += 1;
    iterate(obj, s);
    yield progress();
  }
}

/** Runs `nelderMeadSteps` to the end and returns its result. */
export function nelderMead(f: (x: Float64Array) => number, x0: ArrayLike<number>, options: NelderMeadOptions = {}): NelderMeadResult {
  const steps = nelderMeadSteps(f, x0, options);
  for (;;) {
    const next = steps.next();
    if (next.done === true) return next.value;
  }
}
