import type { ProcessModel } from '../models/process-model.js';
import {
  sparseTimesDenseInto,
  sparseTimesVectorInto,
  symmetricDenseTimesSparseTransposedInto,
} from '../linalg/sparse-pattern.js';
import { allFinite } from '../linalg/symmetric.js';
import type { FilterWorkspace } from './filter-workspace.js';

/**
 * Time update x̂(n+1|n) = A x̂(n|n) (+ G u), P(n+1|n) = A P(n|n) Aᵀ + Q, in place on x and P.
 *
 * The products skip the zeros of A (found by scanning A, see RowPattern) and compute only the
 * upper triangle of A·P·Aᵀ, mirrored, so P stays exactly symmetric. Returns false (and leaves
 * x and P untouched) when the result would not be finite, e.g. for an absurd dt.
 */
export function kalmanPredictInPlace(
  model: ProcessModel,
  dtS: number,
  x: Float64Array,
  P: Float64Array,
  ws: FilterWorkspace,
  input?: Float64Array,
): boolean {
  const n = ws.n;
  if (dtS === 0 && input === undefined) return true;
  const pat = ws.aPattern;
  // Sensors at a fixed rate repeat the same dt: A(dt), Q(dt) and A's pattern are then still in
  // the workspace from the previous step (of any track: they share the estimator's model).
  if (dtS !== ws.cachedDtS || model !== ws.cachedModel) {
    model.discretizeInto(dtS, ws.A, ws.Q);
    pat.scan(ws.A);
    ws.cachedDtS = dtS;
    ws.cachedModel = model;
  }
  sparseTimesVectorInto(ws.A, pat, x, ws.xCandidate);
  if (input !== undefined && model.applyInputInPlace !== undefined) model.applyInputInPlace(dtS, input, ws.xCandidate);
  sparseTimesDenseInto(ws.A, pat, P, n, ws.nn1);
  symmetricDenseTimesSparseTransposedInto(ws.nn1, ws.A, pat, ws.nn2);
  const nn = n * n;
  for (let i = 0; i < nn; i++) ws.nn2[i] = ws.nn2[i]! + ws.Q[i]!;
  if (!allFinite(ws.xCandidate, n) || !allFinite(ws.nn2, nn)) return false;
  x.set(ws.xCandidate);
  P.set(ws.nn2);
  return true;
}
