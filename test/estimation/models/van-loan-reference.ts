/**
 * Van Loan references for the closed-form blocks: build the continuous F, G, Qc of a block and
 * discretize them with discretizeVanLoan, independently of the blocks' own formulas.
 */
import { discretizeVanLoan, type DiscreteStep } from '../../../src/estimation/models/van-loan.js';
import type { ProcessModel } from '../../../src/estimation/models/process-model.js';
import { maxAbs, maxAbsDiff } from './close-to-matrix.js';

/**
 * Chain of `order` integrators per axis (state order: all positions, all velocities, …), white
 * noise of density q[axis] driving the last derivative.
 */
export function vanLoanChain(order: number, q: readonly number[], dtS: number): DiscreteStep {
  const axes = q.length;
  const n = order * axes;
  const F = new Float64Array(n * n);
  const G = new Float64Array(n * axes);
  for (let a = 0; a < axes; a++) {
    for (let i = 0; i + 1 < order; i++) F[(i * axes + a) * n + (i + 1) * axes + a] = 1;
    G[((order - 1) * axes + a) * axes + a] = 1;
  }
  const Qc = new Float64Array(axes * axes);
  q.forEach((v, a) => (Qc[a * axes + a] = v));
  return discretizeVanLoan(F, G, Qc, n, axes, dtS);
}

/** Diagonal first-order drift dx = −x/τ + noise of density qᵢ. */
export function vanLoanDiagonal(rates: readonly number[], q: readonly number[], dtS: number): DiscreteStep {
  const n = rates.length;
  const F = new Float64Array(n * n);
  const G = new Float64Array(n * n);
  const Qc = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    F[i * n + i] = rates[i]!;
    G[i * n + i] = 1;
    Qc[i * n + i] = q[i]!;
  }
  return discretizeVanLoan(F, G, Qc, n, n, dtS);
}

/** Discretizes a model into fresh buffers. */
export function stepOf(m: ProcessModel, dtS: number): DiscreteStep {
  const A = new Float64Array(m.dim * m.dim);
  const Q = new Float64Array(m.dim * m.dim);
  m.discretizeInto(dtS, A, Q);
  return { A, Q };
}

/** True when both A and Q agree within tol relative to max(1, largest entry of the reference). */
export function agrees(got: DiscreteStep, ref: DiscreteStep, tol: number): boolean {
  return (
    maxAbsDiff(got.A, ref.A) <= tol * Math.max(1, maxAbs(ref.A)) &&
    maxAbsDiff(got.Q, ref.Q) <= tol * Math.max(1, maxAbs(ref.Q))
  );
}
