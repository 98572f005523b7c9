/**
 * Reference check C3 of /work/shared/REFERENCE-CHECKS.md: the steady state of the scalar
 * Riccati equation for x(n+1) = φ x(n) + w (var q), y = x + v (var r), reached by iterating the
 * filter through the Estimator entry point. Sources, as named there:
 * - the scalar discrete algebraic Riccati equation solved as a quadratic, e.g. Simon, "Optimal
 *   State Estimation", Wiley 2006, ch. 7, steady-state filtering (from memory);
 * - the α-filter relation λ² = α²/(1 − α): P. R. Kalata, "The tracking index: a generalized
 *   parameter for α-β and α-β-γ target trackers", IEEE Trans. AES 20(2), 1984, pp. 174–182.
 * Tolerance: steady state by iteration, rel 1e-9 (REFERENCE-CHECKS, summary of tolerances).
 */
import { describe, expect, it } from 'vitest';
import { Estimator } from '../../src/estimation/estimator.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { DiscreteModel } from '../../src/estimation/models/discrete-model.js';
import { GaussMarkovModel } from '../../src/estimation/models/gauss-markov-model.js';
import type { ProcessModel } from '../../src/estimation/models/process-model.js';
import { RandomWalkModel } from '../../src/estimation/models/random-walk-model.js';
import { expectRelClose } from './reference-asserts.js';

/** A C3 table row: φ, q, r and the expected steady P⁻, K, P⁺. */
interface ScalarRow {
  readonly phi: number;
  readonly q: number;
  readonly r: number;
  readonly priorP: number;
  readonly gain: number;
  readonly posteriorP: number;
}

// REFERENCE-CHECKS C3 table (Simon 2006, ch. 7, from memory; verified there by two computations).
const randomWalkRows: readonly ScalarRow[] = [
  { phi: 1, q: 1, r: 1, priorP: 1.61803398875, gain: 0.61803398875, posteriorP: 0.61803398875 },
  { phi: 1, q: 0.01, r: 1, priorP: 0.105124921973, gain: 0.0951249219725, posteriorP: 0.0951249219725 },
  { phi: 1, q: 1, r: 0.01, priorP: 1.00990195136, gain: 0.990195135928, posteriorP: 0.00990195135928 },
  { phi: 1, q: 1e-5, r: 0.01, priorP: 3.21267292017e-4, gain: 0.0311267292017, posteriorP: 3.11267292017e-4 },
];
const gaussMarkovRows: readonly ScalarRow[] = [
  { phi: 0.9, q: 0.19, r: 0.5, priorP: 0.359359343294, gain: 0.418171218011, posteriorP: 0.209085609005 },
  { phi: 0.5, q: 1, r: 1, priorP: 1.13278221854, gain: 0.531128874149, posteriorP: 0.531128874149 },
];

const REL = 1e-9;
/**
 * The slowest row (q = 1e-5, r = 0.01) contracts its P error by (1 − K)² ≈ 0.94 a step, so
 * 800 steps take a start-up error of order 30 (relative) below 1e-20.
 */
const STEPS = 800;

interface SteadyState {
  readonly priorP: number;
  readonly gain: number;
  readonly posteriorP: number;
  /** P⁺ one step before the last, to show the iteration has stopped moving. */
  readonly previousPosteriorP: number;
}

/** Feeds one track STEPS unit-spaced readings of a direct sensor with variance r; reads the last step. */
function iterate(process: ProcessModel, r: number): SteadyState {
  const sensor = new LinearMeasurement({ C: [1], dim: 1, stateDim: 1, Rv: [r] });
  const estimator = new Estimator({
    process,
    sensors: [{ name: 'level', model: sensor }],
    filter: 'kf',
    priorMean: [0],
    priorCovariance: [1],
    gateProbability: null,
  });
  const track = estimator.createTrack();
  // The covariance sequence does not depend on the readings, so a constant reading will do.
  expect(track.ingest(0, [0.25], null, 0, 0)).toBe('initialized');
  let previousPosteriorP = Number.NaN;
  const predictedX = new Float64Array(1);
  const predictedP = new Float64Array(1);
  for (let k = 1; k < STEPS; k++) {
    previousPosteriorP = track.P[0]!;
    if (!track.predictInto(k, predictedX, predictedP)) throw new Error(`prediction ${k} failed`);
    const verdict = track.ingest(0, [0.25], null, k, k);
    if (verdict !== 'applied') throw new Error(`step ${k}: ${verdict}`);
  }
  return { priorP: predictedP[0]!, gain: estimator.workspace.filter.K[0]!, posteriorP: track.P[0]!, previousPosteriorP };
}

function expectRow(actual: SteadyState, row: ScalarRow): void {
  const name = `φ=${row.phi}, q=${row.q}, r=${row.r}`;
  expectRelClose(actual.priorP, row.priorP, REL, `${name} P⁻`);
  expectRelClose(actual.gain, row.gain, REL, `${name} K`);
  expectRelClose(actual.posteriorP, row.posteriorP, REL, `${name} P⁺`);
  expectRelClose(actual.posteriorP, actual.previousPosteriorP, 1e-13, `${name} P⁺ converged`);
}

describe('scalar steady state (C3)', () => {
  it('reaches the tabled random-walk steady state P⁻, K, P⁺ with RandomWalkModel', () => {
    for (const row of randomWalkRows) expectRow(iterate(new RandomWalkModel({ spectralDensity: row.q }), row.r), row);
  });

  it('reaches the same random-walk steady state with DiscreteModel A = 1, Q = q', () => {
    for (const row of randomWalkRows) {
      expectRow(iterate(new DiscreteModel({ A: [[1]], Q: [[row.q]], stepS: 1 }), row.r), row);
    }
  });

  it('reaches the tabled first-order Gauss–Markov steady state with DiscreteModel A = φ', () => {
    for (const row of gaussMarkovRows) {
      expectRow(iterate(new DiscreteModel({ A: [[row.phi]], Q: [[row.q]], stepS: 1 }), row.r), row);
    }
  });

  it('reaches the same Gauss–Markov steady state with GaussMarkovModel (φ = e^(−T/τ), q = σ²(1 − φ²))', () => {
    for (const row of gaussMarkovRows) {
      const tauS = -1 / Math.log(row.phi);
      const sigma = Math.sqrt(row.q / (1 - row.phi * row.phi));
      expectRow(iterate(new GaussMarkovModel({ tauS, sigma }), row.r), row);
    }
  });

  it('satisfies the closed form b = q + (φ² − 1)r, P⁻ = (b + √(b² + 4qr))/2, K = P⁻/(P⁻ + r), P⁺ = K r', () => {
    // An independent plain computation of the C3 closed form, beside the filter's own iteration.
    for (const row of [...randomWalkRows, ...gaussMarkovRows]) {
      const { phi, q, r } = row;
      const b = q + (phi * phi - 1) * r;
      const priorP = (b + Math.sqrt(b * b + 4 * q * r)) / 2;
      const gain = priorP / (priorP + r);
      const filter = iterate(new DiscreteModel({ A: [[phi]], Q: [[q]], stepS: 1 }), r);
      expectRelClose(filter.priorP, priorP, REL, `closed-form P⁻ (φ=${phi}, q=${q}, r=${r})`);
      expectRelClose(filter.gain, gain, REL, `closed-form K (φ=${phi}, q=${q}, r=${r})`);
      expectRelClose(filter.posteriorP, gain * r, REL, `closed-form P⁺ (φ=${phi}, q=${q}, r=${r})`);
    }
  });

  it('keeps P⁻ = P⁺ + q at the random-walk steady state', () => {
    // C3: for φ = 1 the prediction only adds q.
    for (const row of randomWalkRows) {
      const s = iterate(new RandomWalkModel({ spectralDensity: row.q }), row.r);
      expectRelClose(s.priorP, s.posteriorP + row.q, REL, `P⁻ − P⁺ (q=${row.q}, r=${row.r})`);
    }
  });

  it("satisfies Kalata's α-filter relation λ² = q/r = α²/(1 − α) with α = K", () => {
    // Kalata 1984 (REFERENCE-CHECKS C3/C4): the tracking index of the α filter.
    for (const row of randomWalkRows) {
      const alpha = iterate(new RandomWalkModel({ spectralDensity: row.q }), row.r).gain;
      expectRelClose(alpha * alpha / (1 - alpha), row.q / row.r, REL, `λ² (q=${row.q}, r=${row.r})`);
    }
  });
});
