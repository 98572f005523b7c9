/**
 * A general continuous-time linear process model dx = F x dt + G dβ, E[dβ dβᵀ] = Qc dt,
 * discretized exactly for each step by Van Loan's (1978) method. The matrix exponential is a
 * setup-time cost, so each distinct dt is computed once and kept in a bounded LRU cache; a hit
 * copies into the caller's buffers and allocates nothing.
 */
import type { ProcessModel } from './process-model.js';
import { checkCovariance, checkShape, inferColumns, inferSquareSize, type MatrixInput } from './matrix-checks.js';
import { checkStateNames } from './parameter-checks.js';
import { discretizeVanLoan, type DiscreteStep } from './van-loan.js';
import { DiscretizationCache, DEFAULT_CACHE_ENTRIES } from './discretization-cache.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';
import { identity } from '../linalg/multiply.js';

/** Configuration of a ContinuousModel. */
export interface ContinuousModelOptions {
  /** Drift matrix F (n×n, 1/s), nested rows or flat row-major. */
  readonly F: MatrixInput;
  /** Noise input matrix G (n×noiseDim); default the n×n identity. */
  readonly G?: MatrixInput;
  /** Spectral density Qc of the white noise β (noiseDim×noiseDim, symmetric PSD; state units²/s per unit of G). */
  readonly Qc: MatrixInput;
  /** One name per state; default `x0`, `x1`, …; its length must match F. */
  readonly stateNames?: readonly string[];
  /** Number of distinct dt values kept (default 64). */
  readonly cacheEntries?: number;
}

/** Continuous-time linear model, discretized exactly (Van Loan 1978) and cached per dt. */
export class ContinuousModel implements ProcessModel {
  /** Number of states n. */
  readonly dim: number;
  /** State names, in state order. */
  readonly stateNames: readonly string[];
  /** Number of white-noise inputs (columns of G). */
  readonly noiseDim: number;
  private readonly F: Float64Array;
  private readonly G: Float64Array;
  private readonly Qc: Float64Array;
  private readonly cache: DiscretizationCache<DiscreteStep>;

  /** Validates F, G, Qc and the names; throws ModelConfigError naming the offending matrix. */
  constructor(options: ContinuousModelOptions) {
    const n = options.stateNames?.length ?? inferSquareSize(options.F);
    this.stateNames = checkStateNames(
      'stateNames',
      options.stateNames ?? Array.from({ length: n }, (_, i) => `x${i}`),
    );
    this.dim = n;
    this.F = checkShape('F', options.F, n, n);
    this.noiseDim = options.G === undefined ? n : inferColumns(options.G, n);
    this.G = options.G === undefined ? identity(n) : checkShape('G', options.G, n, this.noiseDim);
    this.Qc = checkCovariance('Qc', options.Qc, this.noiseDim);
    this.cache = new DiscretizationCache(options.cacheEntries ?? DEFAULT_CACHE_ENTRIES);
  }

  /** Writes Φ(dtS) and Qd(dtS) into A and Q (n×n each); dtS in seconds, ≥ 0. */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    const n = this.dim;
    if (!isUsableStepS(dtS)) return writeNaNStepInto(n, A, Q);
    if (dtS === 0) return writeIdentityStepInto(n, A, Q);
    let step = this.cache.get(dtS);
    if (step === undefined) {
      step = discretizeVanLoan(this.F, this.G, this.Qc, n, this.noiseDim, dtS);
      this.cache.set(dtS, step);
    }
    A.set(step.A);
    Q.set(step.Q);
  }

  /** Number of distinct dt values currently cached (for tests and diagnostics). */
  get cachedSteps(): number {
    return this.cache.size;
  }
}
