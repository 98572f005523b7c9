/**
 * An explicit discrete-time model x(n+1) = A x(n) + B w(n) + G u(n), cov(w) = Q, sampled every
 * stepS seconds. A prediction over dtS applies k = round(dtS/stepS) steps: times off the sample
 * grid are rounded to the nearest step (so a dtS under half a step leaves the state unchanged).
 * The k-step transition A^k, noise Σᵢ₌₀^{k−1} Aⁱ B Q Bᵀ Aⁱᵀ and input gain Σᵢ₌₀^{k−1} Aⁱ G are
 * built by repeated doubling (O(log k) products) and cached per k in a bounded LRU cache.
 * The input u is held constant over the k steps.
 */
import type { ProcessModel } from './process-model.js';
import { checkCovariance, checkShape, inferColumns, inferSquareSize, type MatrixInput } from './matrix-checks.js';
import { checkPositiveFinite, checkStateNames } from './parameter-checks.js';
import { DiscretizationCache, DEFAULT_CACHE_ENTRIES } from './discretization-cache.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';
import { identity, matMulInto, matMulTransBInto } from '../linalg/multiply.js';
import { symmetrizeInPlace } from '../linalg/symmetric.js';

/** Configuration of a DiscreteModel. */
export interface DiscreteModelOptions {
  /** One-step transition A (n×n). */
  readonly A: MatrixInput;
  /** Noise input matrix B (n×noiseDim); default the n×n identity. */
  readonly B?: MatrixInput;
  /** Covariance of w per step (noiseDim×noiseDim, symmetric PSD). */
  readonly Q: MatrixInput;
  /** Known-input matrix G (n×inputDim); absent when the model has no input. */
  readonly G?: MatrixInput;
  /** Sample period in seconds (> 0). */
  readonly stepS: number;
  /** One name per state; default `x0`, `x1`, …; its length must match A. */
  readonly stateNames?: readonly string[];
  /** Number of distinct step counts kept (default 64). */
  readonly cacheEntries?: number;
}

/** k steps of the model: transition, accumulated noise and accumulated input gain. */
interface MultiStep {
  readonly A: Float64Array;
  readonly Q: Float64Array;
  /** Σ Aⁱ G (n×inputDim). */
  readonly S: Float64Array;
}

/** Explicit discrete-time linear model with sample period stepS. */
export class DiscreteModel implements ProcessModel {
  /** Number of states n. */
  readonly dim: number;
  /** State names. */
  readonly stateNames: readonly string[];
  /** Sample period in seconds. */
  readonly stepS: number;
  /** Columns of G; absent without G. */
  declare readonly inputDim?: number;
  /** Adds Σᵢ₌₀^{k−1} Aⁱ G u to x (call after the transition); absent without G. */
  declare readonly applyInputInPlace?: (dtS: number, u: Float64Array, x: Float64Array) => void;
  private readonly inputs: number;
  private readonly one: MultiStep;
  private readonly cache: DiscretizationCache<MultiStep>;

  /** Validates shapes, finiteness, Q (symmetric PSD) and stepS; throws ModelConfigError naming the field. */
  constructor(options: DiscreteModelOptions) {
    const n = options.stateNames?.length ?? inferSquareSize(options.A);
    this.stateNames = checkStateNames('stateNames', options.stateNames ?? Array.from({ length: n }, (_, i) => `x${i}`));
    this.dim = n;
    this.stepS = checkPositiveFinite('stepS', options.stepS);
    const A = checkShape('A', options.A, n, n);
    const noiseDim = options.B === undefined ? n : inferColumns(options.B, n);
    const B = options.B === undefined ? identity(n) : checkShape('B', options.B, n, noiseDim);
    const Qw = checkCovariance('Q', options.Q, noiseDim);
    this.inputs = options.G === undefined ? 0 : inferColumns(options.G, n);
    const G = options.G === undefined ? new Float64Array(0) : checkShape('G', options.G, n, this.inputs);
    this.one = { A, Q: noiseOfOneStep(B, Qw, n, noiseDim), S: G };
    this.cache = new DiscretizationCache(options.cacheEntries ?? DEFAULT_CACHE_ENTRIES);
    if (options.G !== undefined) {
      this.inputDim = this.inputs;
      this.applyInputInPlace = (dtS, u, x) => this.applyInputs(dtS, u, x);
    }
  }

  /** Number of model steps a prediction over dtS applies: round(dtS/stepS). */
  stepsFor(dtS: number): number {
    return Math.round(dtS / this.stepS);
  }

  /** Writes A^k and the accumulated k-step noise into the caller's buffers, k = round(dtS/stepS). */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    if (!isUsableStepS(dtS)) return writeNaNStepInto(this.dim, A, Q);
    const k = this.stepsFor(dtS);
    if (k === 0) return writeIdentityStepInto(this.dim, A, Q);
    const step = this.stepsOf(k);
    A.set(step.A);
    Q.set(step.Q);
  }

  private applyInputs(dtS: number, u: Float64Array, x: Float64Array): void {
    if (!isUsableStepS(dtS)) {
      x.fill(NaN, 0, this.dim);
      return;
    }
    const k = this.stepsFor(dtS);
    if (k === 0) return;
    const S = this.stepsOf(k).S;
    const m = this.inputs;
    for (let i = 0; i < this.dim; i++) {
      let s = 0;
      for (let j = 0; j < m; j++) s += S[i * m + j]! * u[j]!;
      x[i]! += s;
    }
  }

  private stepsOf(k: number): MultiStep {
    let step = this.cache.get(k);
    if (step === undefined) {
      step = power(this.one, k, this.dim, this.inputs);
      this.cache.set(k, step);
    }
    return step;
  }
}

/** B Q Bᵀ (n×n). */
function noiseOfOneStep(B: Float64Array, Qw: Float64Array, n: number, noiseDim: number): Float64Array {
  const bq = new Float64Array(n * noiseDim);
  matMulInto(B, Qw, n, noiseDim, noiseDim, bq);
  const out = new Float64Array(n * n);
  matMulTransBInto(bq, B, n, noiseDim, n, out);
  symmetrizeInPlace(out, n);
  return out;
}

/** `later` applied after `earlier`: A = Aₗ·Aₑ, Q = Aₗ Qₑ Aₗᵀ + Qₗ, S = Aₗ Sₑ + Sₗ. */
function chain(later: MultiStep, earlier: MultiStep, n: number, m: number): MultiStep {
  const A = new Float64Array(n * n);
  matMulInto(later.A, earlier.A, n, n, n, A);
  const aq = new Float64Array(n * n);
  matMulInto(later.A, earlier.Q, n, n, n, aq);
  const Q = new Float64Array(n * n);
  matMulTransBInto(aq, later.A, n, n, n, Q);
  for (let i = 0; i < n * n; i++) Q[i]! += later.Q[i]!;
  symmetrizeInPlace(Q, n);
  const S = new Float64Array(n * m);
  matMulInto(later.A, earlier.S, n, n, m, S);
  for (let i = 0; i < n * m; i++) S[i]! += later.S[i]!;
  return { A, Q, S };
}

/** k ≥ 1 steps by binary doubling; arithmetic halving keeps it right for k beyond 2³¹. */
function power(one: MultiStep, k: number, n: number, m: number): MultiStep {
  let result: MultiStep | undefined;
  let base = one;
  let rest = k;
  while (rest > 0) {
    if (rest % 2 === 1) result = result === undefined ? base : chain(base, result, n, m);
    rest = Math.floor(rest / 2);
    if (rest > 0) base = chain(base, base, n, m);
  }
  return result!;
}
