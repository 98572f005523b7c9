import { RowPattern } from '../linalg/sparse-pattern.js';
import type { PredictKernel } from './predict-kernel.js';
import type { UpdateKernel } from './update-kernel.js';

/** Construction options of a FilterWorkspace. */
export interface FilterWorkspaceOptions {
  /**
   * Run the steps through kernels generated from the nonzero structure of A and H (default
   * true); false keeps the general loop kernels, which tests compare against.
   */
  readonly generatedKernels?: boolean;
}

/**
 * Scratch buffers for one estimator's filter steps, sized once for P states and at most
 * maxM measurement components. Tracks share their estimator's workspace (the daemon is
 * single-threaded), so a track itself holds only x, P and its history.
 */
export class FilterWorkspace {
  readonly n: number;
  readonly maxM: number;
  /** Transition A(dt) and process noise Q(dt) of the current prediction. */
  readonly A: Float64Array;
  readonly Q: Float64Array;
  readonly aPattern: RowPattern;
  /** A·P, then the candidate P before it is committed. */
  readonly nn1: Float64Array;
  readonly nn2: Float64Array;
  readonly nn3: Float64Array;
  readonly xCandidate: Float64Array;
  /** Measurement-sized buffers (first m entries used). */
  readonly H: Float64Array;
  readonly hPattern: RowPattern[];
  readonly yhat: Float64Array;
  readonly y: Float64Array;
  readonly nu: Float64Array;
  readonly S: Float64Array;
  readonly L: Float64Array;
  readonly U: Float64Array;
  readonly Kt: Float64Array;
  readonly K: Float64Array;
  readonly KR: Float64Array;
  readonly mScratch: Float64Array;
  readonly sDiagonal: Float64Array;
  /**
   * The dt and model that ws.A / ws.Q / aPattern currently hold (NaN: nothing cached). Whoever
   * writes ws.A for another purpose must reset cachedDtS to NaN.
   */
  cachedDtS = Number.NaN;
  cachedModel: object | null = null;
  /** The linear measurement model whose constant H (and pattern) ws.H holds, if any. */
  cachedHModel: object | null = null;
  /** Results of the last update: the NIS d² = νᵀS⁻¹ν, and the measurement dimension used. */
  nis = Number.NaN;
  lastM = 0;
  /** Whether generated kernels are used at all (see FilterWorkspaceOptions). */
  readonly generatedKernels: boolean;
  /**
   * The nonzero mask of A that predictKernel was built for, the model whose transitions shaped
   * it, whether the current ws.A is finite, and the kernel (null: the loop kernels).
   */
  readonly aMask: Uint8Array;
  aMaskModel: object | null = null;
  aFinite = false;
  predictKernel: PredictKernel | null = null;
  /**
   * Per measurement dimension m: the nonzero mask of H (m×n) its kernel was built for, whether
   * one was built, and the kernel (null: the loop kernels); hFinite tells whether the current
   * ws.H is finite (a non-finite Jacobian takes the loop kernels, which refuse it).
   */
  readonly hMasks: Uint8Array[];
  readonly hMaskBuilt: Uint8Array;
  readonly updateKernels: (UpdateKernel | null)[];
  hFinite = false;
  /** The NIS slot a generated update writes. */
  readonly nisOut = new Float64Array(1);

  /** Allocates every buffer once (setup time). */
  constructor(n: number, maxM: number, options: FilterWorkspaceOptions = {}) {
    if (!Number.isInteger(n) || n < 1) throw new Error(`FilterWorkspace: state dimension must be a positive integer, got ${n}`);
    if (!Number.isInteger(maxM) || maxM < 1) throw new Error(`FilterWorkspace: measurement dimension must be a positive integer, got ${maxM}`);
    this.n = n;
    this.maxM = maxM;
    this.A = new Float64Array(n * n);
    this.Q = new Float64Array(n * n);
    this.aPattern = new RowPattern(n, n);
    this.nn1 = new Float64Array(n * n);
    this.nn2 = new Float64Array(n * n);
    this.nn3 = new Float64Array(n * n);
    this.xCandidate = new Float64Array(n);
    this.H = new Float64Array(maxM * n);
    // One pattern object per possible m, so the hot path never reallocates.
    this.hPattern = Array.from({ length: maxM + 1 }, (_, m) => new RowPattern(m, n));
    this.yhat = new Float64Array(maxM);
    this.y = new Float64Array(maxM);
    this.nu = new Float64Array(maxM);
    this.S = new Float64Array(maxM * maxM);
    this.L = new Float64Array(maxM * maxM);
    this.U = new Float64Array(n * maxM);
    this.Kt = new Float64Array(maxM * n);
    this.K = new Float64Array(n * maxM);
    this.KR = new Float64Array(n * maxM);
    this.mScratch = new Float64Array(Math.max(maxM, n));
    this.sDiagonal = new Float64Array(maxM);
    this.generatedKernels = options.generatedKernels ?? true;
    this.aMask = new Uint8Array(n * n);
    this.hMasks = Array.from({ length: maxM + 1 }, (_, m) => new Uint8Array(m * n));
    this.hMaskBuilt = new Uint8Array(maxM + 1);
    this.updateKernels = Array.from({ length: maxM + 1 }, () => null);
  }
}
