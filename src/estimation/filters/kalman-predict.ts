import type { ProcessModel } from '../models/process-model.js';
import { fitsMask, resetMask, widenMask } from '../linalg/nonzero-mask.js';
import {
  sparseTimesDenseInto,
  sparseTimesVectorInto,
  symmetricDenseTimesSparseTransposedInto,
} from '../linalg/sparse-pattern.js';
import { allFinite } from '../linalg/symmetric.js';
import type { FilterWorkspace } from './filter-workspace.js';
import { predictKernelFor } from './predict-kernel.js';

/**
 * Time update x̂(n+1|n) = A x̂(n|n) (+ G u), P(n+1|n) = A P(n|n) Aᵀ + Q, in place on x and P
 * (P symmetric).
 *
 * The products skip the zeros of A and compute only the upper triangle of A·P·Aᵀ, mirrored, so
 * P stays exactly symmetric: through a kernel generated for A's nonzero mask (predict-kernel.ts)
 * or, past its size limit, through the loop kernels over A's scanned pattern. Returns false
 * (and leaves x and P untouched) when the result would not be finite, e.g. for an absurd dt.
 */
export function kalmanPredictInPlace(
  model: ProcessModel,
  dtS: number,
  x: Float64Array,
  P: Float64Array,
  ws: FilterWorkspace,
  input?: Float64Array,
): boolean {
  if (dtS === 0 && input === undefined) return true;
  // Sensors at a fixed rate repeat the same dt: A(dt), Q(dt) and the kernel are then still in
  // the workspace from the previous step (of any track: they share the estimator's model).
  if (dtS !== ws.cachedDtS || model !== ws.cachedModel) {
    model.discretizeInto(dtS, ws.A, ws.Q);
    ws.cachedDtS = dtS;
    ws.cachedModel = model;
    refreshPredictKernel(model, ws);
  }
  // A non-finite A (an unusable dt) can only give a non-finite prediction.
  if (!ws.aFinite) return false;
  const kernel = ws.predictKernel;
  const withInput = input !== undefined && model.applyInputInPlace !== undefined;
  if (kernel !== null && !withInput) return kernel(ws.A, ws.Q, x, P, x, P);
  if (kernel !== null) {
    if (!kernel(ws.A, ws.Q, x, P, ws.xCandidate, ws.nn2)) return false;
  } else {
    predictByLoopsInto(x, P, ws);
  }
  if (withInput) model.applyInputInPlace!(dtS, input, ws.xCandidate);
  const n = ws.n;
  if (!allFinite(ws.xCandidate, n) || !allFinite(ws.nn2, n * n)) return false;
  x.set(ws.xCandidate);
  P.set(ws.nn2);
  return true;
}

/**
 * After ws.A is rewritten: keeps the kernel while A's nonzeros stay inside its mask, widens the
 * mask (and rebuilds) when a new nonzero appears, and starts afresh for another model. The loop
 * kernels need A's exact pattern, so it is scanned only when they are in use.
 */
function refreshPredictKernel(model: ProcessModel, ws: FilterWorkspace): void {
  const nn = ws.n * ws.n;
  ws.aFinite = allFinite(ws.A, nn);
  if (!ws.aFinite) return;
  if (ws.generatedKernels) {
    if (model !== ws.aMaskModel) {
      resetMask(ws.A, ws.aMask, nn);
      ws.aMaskModel = model;
      ws.predictKernel = predictKernelFor(ws.n, ws.aMask);
    } else if (!fitsMask(ws.A, ws.aMask, nn)) {
      widenMask(ws.A, ws.aMask, nn);
      ws.predictKernel = predictKernelFor(ws.n, ws.aMask);
    }
  }
  if (ws.predictKernel === null) ws.aPattern.scan(ws.A);
}

/** The general path: A x into ws.xCandidate, A P Aᵀ + Q into ws.nn2, over A's row pattern. */
function predictByLoopsInto(x: Float64Array, P: Float64Array, ws: FilterWorkspace): void {
  const n = ws.n;
  const pat = ws.aPattern;
  sparseTimesVectorInto(ws.A, pat, x, ws.xCandidate);
  sparseTimesDenseInto(ws.A, pat, P, n, ws.nn1);
  symmetricDenseTimesSparseTransposedInto(ws.nn1, ws.A, pat, ws.nn2);
  const nn = n * n;
  for (let i = 0; i < nn; i++) ws.nn2[i] = ws.nn2[i]! + ws.Q[i]!;
}
