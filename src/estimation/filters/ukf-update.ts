import type { MeasurementModel } from '../measurements/measurement-model.js';
import { isPositiveSemidefinite } from '../linalg/cholesky.js';
import { allFinite, symmetrizeInPlace } from '../linalg/symmetric.js';
import type { FilterWorkspace } from './filter-workspace.js';
import { addNoiseAndGate, gainAndStateInto } from './innovation-gate.js';
import type { UpdateVerdict } from './kalman-update.js';
import {
  deviationCovarianceInto,
  propagateSigmaPointsInto,
  sigmaPointsInto,
  type UnscentedWorkspace,
} from './unscented-transform.js';

/**
 * Measurement update of the UKF, in place on x and P, with the contract of kalmanUpdateInPlace:
 * 'applied', 'gate' (d² = νᵀS⁻¹ν above gateThreshold; Infinity disables the gate) or 'numerics';
 * nothing is committed unless the result is finite and PSD; ws.nis, ws.nu and ws.sDiagonal are
 * left for health statistics.
 *
 * Sigma points of N(x, P) go through h; ŷ, S = Σ W^c ΔY ΔYᵀ + R and Pxy = Σ W^c Δχ ΔYᵀ follow
 * (Wan & van der Merwe 2000), with every ΔY taken through model.innovationInto so bearings and
 * headings average on the circle. K = Pxy S⁻¹ by Cholesky solves, x += Kν, P −= K S Kᵀ,
 * symmetrized.
 *
 * Every process model of this project is linear, and the unscented transform of a linear map
 * is exact, so a UKF here predicts with the exact linear step (kalmanPredictInPlace) and uses
 * this update; only h may be nonlinear.
 *
 * Throws when the workspaces do not fit (uws.n ≠ ws.n, or model.dim above either maxM): that is a
 * programmer error, and the sigma-point buffers would otherwise overlap silently.
 */
export function unscentedUpdateInPlace(
  model: MeasurementModel,
  y: Float64Array,
  R: Float64Array,
  gateThreshold: number,
  x: Float64Array,
  P: Float64Array,
  ws: FilterWorkspace,
  uws: UnscentedWorkspace,
): UpdateVerdict {
  const n = ws.n;
  const m = model.dim;
  if (uws.n !== n || m > uws.maxM || m > ws.maxM) {
    throw new Error(`unscentedUpdateInPlace: workspaces sized for ${ws.n}/${uws.n} states and ${ws.maxM}/${uws.maxM} components do not fit a ${m}-component model`);
  }
  ws.lastM = m;
  ws.nis = Number.NaN;
  if (!sigmaPointsInto(x, P, uws)) return 'numerics';
  propagateSigmaPointsInto(model, uws, ws.yhat);
  model.innovationInto(y, ws.yhat, ws.nu);
  const S = ws.S;
  deviationCovarianceInto(m, uws, S);
  const refused = addNoiseAndGate(R, m, gateThreshold, ws);
  if (refused !== null) return refused;
  crossCovarianceInto(m, uws, ws.U);
  gainAndStateInto(x, m, ws);
  const K = ws.K;
  // K S into ws.KR, then P − (K S) Kᵀ into ws.nn2.
  const KS = ws.KR;
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < m; c++) {
      let s = 0;
      for (let r = 0; r < m; r++) s += K[i * m + r]! * S[r * m + c]!;
      KS[i * m + c] = s;
    }
  }
  const out = ws.nn2;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let c = 0; c < m; c++) s += KS[i * m + c]! * K[j * m + c]!;
      out[i * n + j] = P[i * n + j]! - s;
    }
  }
  symmetrizeInPlace(out, n);
  if (!allFinite(ws.xCandidate, n) || !isPositiveSemidefinite(out, n, ws.nn3)) return 'numerics';
  x.set(ws.xCandidate);
  P.set(out);
  return 'applied';
}

/**
 * Pxy = Σ W^c_i Δχ_i ΔY_iᵀ into out (n×m). Δχ_{±i} = ±column i of uws.scaledSqrt exactly, and
 * Δχ_0 = 0, so W^c_0 drops out and each pair contributes W·d·(ΔY_{+i} − ΔY_{−i})ᵀ.
 */
function crossCovarianceInto(m: number, uws: UnscentedWorkspace, out: Float64Array): void {
  const n = uws.n;
  const mm = uws.maxM;
  const L = uws.scaledSqrt;
  const dY = uws.deviations;
  for (let j = 0; j < n; j++) {
    for (let r = 0; r < m; r++) {
      let s = 0;
      for (let i = 0; i < n; i++) {
        const d = L[j * n + i]!;
        if (d === 0) continue;
        s += d * (dY[(1 + i) * mm + r]! - dY[(1 + n + i) * mm + r]!);
      }
      out[j * m + r] = uws.weight * s;
    }
  }
}
