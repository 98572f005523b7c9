import { choleskyInto, choleskySolveInPlace, isPositiveSemidefinite } from '../linalg/cholesky.js';
import { allFinite } from '../linalg/symmetric.js';

/**
 * Rauch–Tung–Striebel backward recursion (Rauch, Tung, Striebel, "Maximum likelihood estimates
 * of linear dynamic systems", AIAA J. 3(8), 1965, pp. 1445–1450), for one step k ← k+1:
 *   G = P_f(k) Aᵀ P_p(k+1)⁻¹,
 *   x_s(k) = x_f(k) + G (x_s(k+1) − x_p(k+1)),
 *   P_s(k) = P_f(k) + G (P_s(k+1) − P_p(k+1)) Gᵀ.
 */

/** Scratch for rtsSmoothStepInto on n states, allocated once. */
export class RtsWorkspace {
  readonly n: number;
  /** Cholesky factor of P_p(k+1). */
  readonly L: Float64Array;
  /** Gᵀ, built as P_p⁻¹ (A P_f) by two triangular solves. */
  readonly Gt: Float64Array;
  readonly dP: Float64Array;
  /** G (P_s − P_p). */
  readonly GdP: Float64Array;
  readonly PCandidate: Float64Array;
  readonly psdScratch: Float64Array;
  readonly dx: Float64Array;
  readonly xCandidate: Float64Array;

  /** Allocates every buffer; throws for a dimension that is not a positive integer. */
  constructor(n: number) {
    if (!Number.isInteger(n) || n < 1) throw new Error(`RtsWorkspace: state dimension must be a positive integer, got ${n}`);
    this.n = n;
    this.L = new Float64Array(n * n);
    this.Gt = new Float64Array(n * n);
    this.dP = new Float64Array(n * n);
    this.GdP = new Float64Array(n * n);
    this.PCandidate = new Float64Array(n * n);
    this.psdScratch = new Float64Array(n * n);
    this.dx = new Float64Array(n);
    this.xCandidate = new Float64Array(n);
  }
}

/**
 * One RTS step: from the filtered (xF, PF) at k, the prediction (xP, PP) at k+1 made from it
 * with transition A (k → k+1), and the smoothed (xSNext, PSNext) at k+1, writes the smoothed
 * estimate at k into (xOut, POut). Every input is read before any output is written, so the
 * outputs may alias xF/PF or xSNext/PSNext. Returns false, writing nothing, when PP is not
 * positive definite or the result is not finite and PSD. Allocates nothing.
 */
export function rtsSmoothStepInto(
  xF: Float64Array, PF: Float64Array,
  xP: Float64Array, PP: Float64Array, A: Float64Array,
  xSNext: Float64Array, PSNext: Float64Array,
  xOut: Float64Array, POut: Float64Array,
  sws: RtsWorkspace,
): boolean {
  const n = sws.n;
  if (!choleskyInto(PP, n, sws.L)) return false;
  // Gᵀ = P_p⁻¹ A P_f (P_p, P_f symmetric): solve P_p X = A P_f rather than inverting P_p.
  const Gt = sws.Gt;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += A[i * n + k]! * PF[k * n + j]!;
      Gt[i * n + j] = s;
    }
  }
  choleskySolveInPlace(sws.L, n, Gt, n);
  for (let i = 0; i < n; i++) sws.dx[i] = xSNext[i]! - xP[i]!;
  for (let k = 0; k < n * n; k++) sws.dP[k] = PSNext[k]! - PP[k]!;
  for (let i = 0; i < n; i++) {
    let s = xF[i]!;
    for (let k = 0; k < n; k++) s += Gt[k * n + i]! * sws.dx[k]!;
    sws.xCandidate[i] = s;
  }
  // G dP, with G[i][k] = Gt[k][i].
  const GdP = sws.GdP;
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let k = 0; k < n; k++) s += Gt[k * n + i]! * sws.dP[k * n + j]!;
      GdP[i * n + j] = s;
    }
  }
  // P_f + (G dP) Gᵀ on the upper triangle, mirrored: the average of both triangles of P_f keeps
  // the result exactly symmetric even when the caller's P_f carries rounding asymmetry.
  const Pc = sws.PCandidate;
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      let s = 0.5 * (PF[i * n + j]! + PF[j * n + i]!);
      for (let k = 0; k < n; k++) s += GdP[i * n + k]! * Gt[k * n + j]!;
      Pc[i * n + j] = s;
      Pc[j * n + i] = s;
    }
  }
  if (!allFinite(sws.xCandidate, n) || !isPositiveSemidefinite(Pc, n, sws.psdScratch)) return false;
  xOut.set(sws.xCandidate);
  POut.set(Pc);
  return true;
}

/** One filter step for smoothBatch; the prediction fields describe the step into this one. */
export interface SmootherStep {
  /** Time stamp of this step, seconds. */
  readonly tS: number;
  readonly xFiltered: Float64Array;
  readonly PFiltered: Float64Array;
  /** Prediction into this step from the previous one, and its transition; unused for step 0. */
  readonly xPredicted?: Float64Array;
  readonly PPredicted?: Float64Array;
  readonly A?: Float64Array;
}

/** A smoothed estimate x̂(k|N), P(k|N). */
export interface SmoothedStep {
  readonly tS: number;
  readonly x: Float64Array;
  readonly P: Float64Array;
  /**
   * True when the step into k+1 could not be used (P_p(k+1) not positive definite, or a result
   * not finite/PSD): the backward pass restarts here from the filtered estimate, so this step
   * and the earlier ones do not see the later data.
   */
  readonly restarted: boolean;
}

/**
 * Offline RTS smoothing of a whole filtered sequence (allocates the result). The last step is
 * its own smoothed estimate. Throws when the steps are ragged (missing prediction fields after
 * step 0, or arrays of the wrong length), which is a programmer error, not bad data.
 */
export function smoothBatch(steps: readonly SmootherStep[]): SmoothedStep[] {
  if (steps.length === 0) return [];
  const n = steps[0]!.xFiltered.length;
  steps.forEach((s, k) => checkStep(s, k, n));
  const sws = new RtsWorkspace(n);
  const out: SmoothedStep[] = new Array<SmoothedStep>(steps.length);
  const last = steps[steps.length - 1]!;
  out[steps.length - 1] = { tS: last.tS, x: Float64Array.from(last.xFiltered), P: Float64Array.from(last.PFiltered), restarted: false };
  for (let k = steps.length - 2; k >= 0; k--) {
    const s = steps[k]!;
    const next = steps[k + 1]!;
    const later = out[k + 1]!;
    const x = new Float64Array(n);
    const P = new Float64Array(n * n);
    const ok = rtsSmoothStepInto(
      s.xFiltered, s.PFiltered, next.xPredicted!, next.PPredicted!, next.A!, later.x, later.P, x, P, sws,
    );
    if (!ok) {
      x.set(s.xFiltered);
      P.set(s.PFiltered);
    }
    out[k] = { tS: s.tS, x, P, restarted: !ok };
  }
  return out;
}

function checkStep(s: SmootherStep, k: number, n: number): void {
  const bad = (what: string): never => {
    throw new Error(`smoothBatch: step ${k}: ${what}`);
  };
  if (s.xFiltered.length !== n) bad(`xFiltered has ${s.xFiltered.length} entries, expected ${n}`);
  if (s.PFiltered.length !== n * n) bad(`PFiltered has ${s.PFiltered.length} entries, expected ${n * n}`);
  if (k === 0) return;
  if (s.xPredicted?.length !== n) bad(`xPredicted must have ${n} entries`);
  if (s.PPredicted?.length !== n * n) bad(`PPredicted must have ${n * n} entries`);
  if (s.A?.length !== n * n) bad(`A must have ${n * n} entries`);
}
