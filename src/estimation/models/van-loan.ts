/**
 * Exact discretization of a continuous-time linear model dx = F x dt + G dβ, E[dβ dβᵀ] = Qc dt,
 * over a step T, by C. F. Van Loan, "Computing integrals involving the matrix exponential",
 * IEEE Trans. Automatic Control 23(3), 1978, pp. 395–404 (§4): with
 * M = [[−F, G Qc Gᵀ], [0, Fᵀ]]·T and C = e^M, the transition is Φ = C22ᵀ and the process noise is
 * Qd = ∫₀ᵀ e^{Fs} G Qc Gᵀ e^{Fᵀs} ds = Φ·C12. Setup time only: it allocates.
 */
import { expm } from '../linalg/expm.js';
import { matMulInto, matMulTransBInto, transposeInto } from '../linalg/multiply.js';
import { symmetrizeInPlace } from '../linalg/symmetric.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';

/** A discrete step: transition A (n×n) and process-noise covariance Q (n×n), row-major. */
export interface DiscreteStep {
  /** Transition A(dt) = e^{F·dt}. */
  readonly A: Float64Array;
  /** Process-noise covariance Q(dt), exactly symmetric. */
  readonly Q: Float64Array;
}

/** G Qc Gᵀ (n×n) from G (n×noiseDim) and Qc (noiseDim×noiseDim). */
function diffusionMatrix(G: Float64Array, Qc: Float64Array, n: number, noiseDim: number): Float64Array {
  const gq = new Float64Array(n * noiseDim);
  matMulInto(G, Qc, n, noiseDim, noiseDim, gq);
  const out = new Float64Array(n * n);
  matMulTransBInto(gq, G, n, noiseDim, n, out);
  return out;
}

/** Van Loan's block matrix M = [[−F, G Qc Gᵀ], [0, Fᵀ]]·dtS (2n×2n). */
function vanLoanBlock(F: Float64Array, W: Float64Array, n: number, dtS: number): Float64Array {
  const m = 2 * n;
  const M = new Float64Array(m * m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      M[i * m + j] = -F[i * n + j]! * dtS;
      M[i * m + n + j] = W[i * n + j]! * dtS;
      M[(n + i) * m + n + j] = F[j * n + i]! * dtS;
    }
  }
  return M;
}

function norm1(a: Float64Array, n: number): number {
  let best = 0;
  for (let j = 0; j < n; j++) {
    let s = 0;
    for (let i = 0; i < n; i++) s += Math.abs(a[i * n + j]!);
    best = Math.max(best, s);
  }
  return best;
}

/**
 * A power of two α ≥ 1 to divide G Qc Gᵀ by before forming M. C12 is linear in that block, so
 * Qd(W) = α·Qd(W/α) exactly; but a large ‖W‖·T (a loud noise on slow dynamics) would otherwise
 * set the number of squarings in expm and cost digits in both Φ and Qd. Scaling the block to the
 * size of ‖F‖·T (at least 1) keeps the squarings down to what the dynamics need. A power of two
 * keeps the scaling itself free of rounding.
 */
function balancingFactor(F: Float64Array, W: Float64Array, n: number, dtS: number): number {
  const w = norm1(W, n) * dtS;
  if (!(w > 0) || !Number.isFinite(w)) return 1;
  const target = Math.max(norm1(F, n) * dtS, 1);
  // Only ever scale down: a quiet block does not drive the squarings, and scaling it up could overflow.
  return 2 ** Math.max(0, Math.round(Math.log2(w / target)));
}

/**
 * Φ = e^{F·dtS} and Qd for dx = F x dt + G dβ with E[dβ dβᵀ] = Qc dt. F is n×n, G n×noiseDim,
 * Qc noiseDim×noiseDim (spectral densities, e.g. m²/s³ for white acceleration), dtS in seconds.
 * dtS = 0 gives I and 0; a negative or non-finite dtS gives NaN.
 */
export function discretizeVanLoan(
  F: Float64Array,
  G: Float64Array,
  Qc: Float64Array,
  n: number,
  noiseDim: number,
  dtS: number,
): DiscreteStep {
  const A = new Float64Array(n * n);
  const Q = new Float64Array(n * n);
  if (!isUsableStepS(dtS)) {
    writeNaNStepInto(n, A, Q);
    return { A, Q };
  }
  if (dtS === 0) {
    writeIdentityStepInto(n, A, Q);
    return { A, Q };
  }
  const m = 2 * n;
  const W = diffusionMatrix(G, Qc, n, noiseDim);
  const alpha = balancingFactor(F, W, n, dtS);
  for (let k = 0; k < n * n; k++) W[k]! /= alpha;
  const C = expm(vanLoanBlock(F, W, n, dtS), m);
  const c12 = new Float64Array(n * n);
  const c22 = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      c12[i * n + j] = C[i * m + n + j]!;
      c22[i * n + j] = C[(n + i) * m + n + j]!;
    }
  }
  transposeInto(c22, n, n, A);
  matMulInto(A, c12, n, n, n, Q);
  for (let k = 0; k < n * n; k++) Q[k]! *= alpha;
  // Φ·C12 is symmetric only up to rounding; covariances downstream rely on exact symmetry.
  symmetrizeInPlace(Q, n);
  return { A, Q };
}
