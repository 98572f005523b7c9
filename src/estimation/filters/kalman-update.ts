import type { MeasurementModel } from '../measurements/measurement-model.js';
import { isPositiveSemidefinite } from '../linalg/cholesky.js';
import { denseTimesSparseTransposedInto } from '../linalg/sparse-pattern.js';
import { allFinite } from '../linalg/symmetric.js';
import type { FilterWorkspace } from './filter-workspace.js';
import { addNoiseAndGate, gainAndStateInto } from './innovation-gate.js';
import { fitsMask, widenMask } from '../linalg/nonzero-mask.js';
import { UPDATE_APPLIED, UPDATE_GATE, updateKernelFor } from './update-kernel.js';

/** What an update did: applied, refused by the gate, or refused because the numbers broke. */
export type UpdateVerdict = 'applied' | 'gate' | 'numerics';

/**
 * Measurement update of the KF (linear h) or EKF (h linearized at x̂(n|n-1)), in place on x, P.
 *
 * S = H P Hᵀ + R is factorized by Cholesky (no explicit inverse); d² = νᵀS⁻¹ν is gated against
 * gateThreshold (Infinity disables the gate); P is updated in the Joseph form
 * (I − KH) P (I − KH)ᵀ + K R Kᵀ, which stays symmetric PSD for any gain (Bucy & Joseph 1968;
 * Simon, Optimal State Estimation, 2006, eq. 5.19; from memory), computed on the upper triangle
 * and mirrored. Nothing is committed unless the result is finite and PSD. The NIS, ν and
 * diag(S) of the attempt are left in the workspace for health statistics, and S, its Cholesky
 * factor ws.L and K for inspection (the tuning tool reads log det S from ws.L). P must be
 * symmetric. The work runs in a kernel generated for H's nonzero mask (update-kernel.ts) or,
 * past its size limit or for a non-finite H, in the loop kernels below.
 */
export function kalmanUpdateInPlace(
  model: MeasurementModel,
  y: Float64Array,
  R: Float64Array,
  gateThreshold: number,
  x: Float64Array,
  P: Float64Array,
  ws: FilterWorkspace,
): UpdateVerdict {
  const m = model.dim;
  ws.lastM = m;
  ws.nis = Number.NaN;
  model.measureInto(x, ws.yhat);
  // A linear sensor's H is its constant C: written once until another model runs.
  if (!model.linear || model !== ws.cachedHModel) {
    model.jacobianInto(x, ws.H);
    ws.cachedHModel = model.linear ? model : null;
    refreshUpdateKernel(m, ws);
  }
  model.innovationInto(y, ws.yhat, ws.nu);
  const kernel = ws.hFinite ? ws.updateKernels[m]! : null;
  if (kernel === null) return updateByLoops(m, R, gateThreshold, x, P, ws);
  ws.nisOut[0] = Number.NaN;
  const code = kernel(x, P, ws.H, R, ws.nu, gateThreshold, ws.S, ws.sDiagonal, ws.L, ws.K, ws.nisOut);
  ws.nis = ws.nisOut[0]!;
  return code === UPDATE_APPLIED ? 'applied' : code === UPDATE_GATE ? 'gate' : 'numerics';
}

/**
 * After ws.H is rewritten: keeps the kernel of dimension m while H's nonzeros stay inside its
 * mask, and widens the mask (shared by every sensor of that dimension, so alternating sensors
 * settle on one kernel) when a new nonzero appears. A non-finite H goes to the loop kernels,
 * which refuse it, so that it never widens the mask. The loops need H's exact pattern.
 */
function refreshUpdateKernel(m: number, ws: FilterWorkspace): void {
  const len = m * ws.n;
  ws.hFinite = allFinite(ws.H, len);
  if (ws.hFinite && ws.generatedKernels) {
    const mask = ws.hMasks[m]!;
    if (ws.hMaskBuilt[m] === 0 || !fitsMask(ws.H, mask, len)) {
      widenMask(ws.H, mask, len);
      ws.updateKernels[m] = updateKernelFor(ws.n, m, mask);
      ws.hMaskBuilt[m] = 1;
    }
  }
  if (!ws.hFinite || ws.updateKernels[m] === null) ws.hPattern[m]!.scan(ws.H);
}

/** The general path over H's row pattern, for sizes past the generated kernels' limit. */
function updateByLoops(
  m: number, R: Float64Array, gateThreshold: number, x: Float64Array, P: Float64Array, ws: FilterWorkspace,
): UpdateVerdict {
  const n = ws.n;
  const H = ws.H;
  const pat = ws.hPattern[m]!;
  // U = P Hᵀ (n×m); S = H U (upper triangle, mirrored), then + R in addNoiseAndGate.
  denseTimesSparseTransposedInto(P, n, H, pat, ws.U);
  const S = ws.S;
  const U = ws.U;
  const rowStart = pat.rowStart;
  const cols = pat.cols;
  for (let r = 0; r < m; r++) {
    const end = rowStart[r + 1]!;
    for (let c = r; c < m; c++) {
      let s = 0;
      for (let t = rowStart[r]!; t < end; t++) {
        const k = cols[t]!;
        s += H[r * n + k]! * U[k * m + c]!;
      }
      S[r * m + c] = s;
      S[c * m + r] = s;
    }
  }
  const refused = addNoiseAndGate(R, m, gateThreshold, ws);
  if (refused !== null) return refused;
  gainAndStateInto(x, m, ws);
  josephInto(P, H, pat.rowStart, pat.cols, R, m, ws);
  if (!allFinite(ws.xCandidate, n) || !isPositiveSemidefinite(ws.nn2, n, ws.nn3)) return 'numerics';
  x.set(ws.xCandidate);
  P.set(ws.nn2);
  return 'applied';
}

/**
 * ws.nn2 = (I − KH) P (I − KH)ᵀ + K R Kᵀ, evaluated in factored order to use H's sparsity:
 * (I − KH)P = P − K Uᵀ with U = P Hᵀ (already computed, P symmetric), then
 * [(I − KH)P](I − KH)ᵀ = LP − (LP Hᵀ) Kᵀ. The result is the Joseph form exactly, not the
 * shortened P − KSKᵀ, so it stays symmetric PSD for any gain (C11 checks both gains).
 */
function josephInto(
  P: Float64Array, H: Float64Array, rowStart: Int32Array, cols: Int32Array,
  R: Float64Array, m: number, ws: FilterWorkspace,
): void {
  const n = ws.n;
  const K = ws.K;
  const U = ws.U;
  const LP = ws.nn3;
  for (let i = 0; i < n; i++) {
    const im = i * m;
    const ni = i * n;
    for (let j = 0; j < n; j++) {
      let s = P[ni + j]!;
      const jm = j * m;
      for (let r = 0; r < m; r++) s -= K[im + r]! * U[jm + r]!;
      LP[ni + j] = s;
    }
  }
  // W = LP Hᵀ (n×m), reusing ws.Kt's storage (its contents are no longer needed).
  const W = ws.Kt;
  for (let i = 0; i < n; i++) {
    for (let r = 0; r < m; r++) {
      let s = 0;
      const end = rowStart[r + 1]!;
      for (let t = rowStart[r]!; t < end; t++) {
        const k = cols[t]!;
        s += LP[i * n + k]! * H[r * n + k]!;
      }
      W[i * m + r] = s;
    }
  }
  // D = K R − W (n×m), so the result is LP + D Kᵀ.
  const D = ws.KR;
  for (let i = 0; i < n; i++) {
    const im = i * m;
    for (let c = 0; c < m; c++) {
      let s = -W[im + c]!;
      for (let r = 0; r < m; r++) s += K[im + r]! * 0.5 * (R[r * m + c]! + R[c * m + r]!);
      D[im + c] = s;
    }
  }
  const out = ws.nn2;
  for (let i = 0; i < n; i++) {
    const im = i * m;
    const ni = i * n;
    for (let j = i; j < n; j++) {
      let s = LP[ni + j]!;
      const jm = j * m;
      for (let c = 0; c < m; c++) s += D[im + c]! * K[jm + c]!;
      out[ni + j] = s;
      out[j * n + i] = s;
    }
  }
}
