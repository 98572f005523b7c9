import { choleskyInto, choleskySolveInPlace, mahalanobisSquared } from '../linalg/cholesky.js';
import { allFinite } from '../linalg/symmetric.js';
import type { FilterWorkspace } from './filter-workspace.js';

/**
 * The steps every measurement update shares once ws.S holds the predicted measurement
 * covariance (H P Hᵀ or the unscented Σ W ΔY ΔYᵀ, symmetric) and ws.nu the innovation: add R,
 * factorize S by Cholesky, score d² = νᵀS⁻¹ν and gate it. Returns 'numerics' or 'gate' to refuse
 * the update, null to go on; ws.nis and ws.sDiagonal are set either way for health statistics.
 */
export function addNoiseAndGate(R: Float64Array, m: number, gateThreshold: number, ws: FilterWorkspace): 'numerics' | 'gate' | null {
  const S = ws.S;
  for (let r = 0; r < m; r++) {
    for (let c = r; c < m; c++) {
      // Average R's two triangles so a slightly asymmetric reported covariance cannot skew S.
      const v = S[r * m + c]! + 0.5 * (R[r * m + c]! + R[c * m + r]!);
      S[r * m + c] = v;
      S[c * m + r] = v;
    }
    ws.sDiagonal[r] = S[r * m + r]!;
  }
  if (!allFinite(ws.nu, m) || !allFinite(S, m * m) || !choleskyInto(S, m, ws.L)) return 'numerics';
  const d2 = mahalanobisSquared(ws.L, m, ws.nu, ws.mScratch);
  ws.nis = d2;
  if (!Number.isFinite(d2)) return 'numerics';
  return d2 > gateThreshold ? 'gate' : null;
}

/**
 * The gain K = U S⁻¹ (U = the state–measurement cross covariance in ws.U, n×m) by two
 * triangular solves with ws.L, never an explicit inverse, into ws.K; and x + Kν into
 * ws.xCandidate.
 */
export function gainAndStateInto(x: Float64Array, m: number, ws: FilterWorkspace): void {
  const n = ws.n;
  const Kt = ws.Kt;
  const K = ws.K;
  const U = ws.U;
  for (let r = 0; r < m; r++) for (let i = 0; i < n; i++) Kt[r * n + i] = U[i * m + r]!;
  choleskySolveInPlace(ws.L, m, Kt, n);
  for (let i = 0; i < n; i++) for (let r = 0; r < m; r++) K[i * m + r] = Kt[r * n + i]!;
  for (let i = 0; i < n; i++) {
    let s = x[i]!;
    for (let r = 0; r < m; r++) s += K[i * m + r]! * ws.nu[r]!;
    ws.xCandidate[i] = s;
  }
}
