/**
 * Reference check C4 of /work/shared/REFERENCE-CHECKS.md: the Riccati steady state of the
 * discrete white-noise acceleration (DWNA) and piecewise-constant white acceleration (DWPA)
 * trackers equals Kalata's closed-form α-β and α-β-γ gains; the continuous white-noise
 * acceleration (CWNA) model does not. Sources, as named there:
 * - P. R. Kalata, "The tracking index: a generalized parameter for α-β and α-β-γ target
 *   trackers", IEEE Trans. AES 20(2), 1984, pp. 174–182;
 * - Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to Tracking and Navigation"
 *   (Wiley 2001), §6.5 (equation numbers from memory);
 * - Gray & Murray, IEEE Trans. AES 29(3), 1993 (analytic α-β-γ in terms of λ; from memory).
 * Tolerance: rel 1e-9 (steady state by iteration). The gains are read from the filter workspace
 * after the last update and cross-checked against K = P⁻Hᵀ/(HP⁻Hᵀ + R) from the predicted P⁻.
 */
import { describe, expect, it } from 'vitest';
import { Estimator } from '../../src/estimation/estimator.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { ConstantVelocityModel } from '../../src/estimation/models/constant-velocity-model.js';
import { DiscreteModel } from '../../src/estimation/models/discrete-model.js';
import type { ProcessModel } from '../../src/estimation/models/process-model.js';
import { expectAllRelClose, expectRelClose, tri } from './reference-asserts.js';

const REL = 1e-9;
const STEPS = 600;

interface SteadyState {
  readonly gain: Float64Array;
  readonly priorP: Float64Array;
  readonly posteriorP: Float64Array;
}

/** Runs a track reading the first state (variance σw²) every T seconds; returns the last step. */
function iterate(process: ProcessModel, T: number, sigmaW: number): SteadyState {
  const n = process.dim;
  const C = new Float64Array(n);
  C[0] = 1;
  const sensor = new LinearMeasurement({ C, dim: 1, stateDim: n, Rv: [sigmaW * sigmaW] });
  const prior = new Float64Array(n * n);
  for (let i = 0; i < n; i++) prior[i * n + i] = 100;
  const estimator = new Estimator({
    process,
    sensors: [{ name: 'position', model: sensor }],
    filter: 'kf',
    priorMean: new Float64Array(n),
    priorCovariance: prior,
    gateProbability: null,
  });
  const track = estimator.createTrack();
  // The covariance sequence does not depend on the readings.
  expect(track.ingest(0, [0], null, 0, 0)).toBe('initialized');
  const x = new Float64Array(n);
  const priorP = new Float64Array(n * n);
  let previous = Float64Array.from(track.P);
  for (let k = 1; k < STEPS; k++) {
    previous = Float64Array.from(track.P);
    if (!track.predictInto(k * T, x, priorP)) throw new Error(`prediction ${k} failed`);
    const verdict = track.ingest(0, [0], null, k * T, k * T);
    if (verdict !== 'applied') throw new Error(`step ${k}: ${verdict}`);
  }
  // Invariant: the iteration has stopped moving.
  expectAllRelClose(track.P, previous, 1e-12, 'P⁺ converged');
  const gain = estimator.workspace.filter.K.slice(0, n);
  // Invariant: the workspace gain is P⁻Hᵀ/(HP⁻Hᵀ + R) of the predicted covariance.
  const S = priorP[0]! + sigmaW * sigmaW;
  for (let i = 0; i < n; i++) expectRelClose(gain[i]!, priorP[i * n]! / S, 1e-12, `K[${i}] from P⁻`);
  return { gain, priorP, posteriorP: Float64Array.from(track.P) };
}

/** DWNA: A = [[1, T], [0, 1]], Γ = [T²/2, T]ᵀ, Q = σv² ΓΓᵀ (C4 setup). */
function dwna(T: number, sigmaV: number): DiscreteModel {
  const g = [T * T / 2, T];
  const v = sigmaV * sigmaV;
  return new DiscreteModel({
    A: [[1, T], [0, 1]],
    Q: g.map((gi) => g.map((gj) => v * gi * gj)),
    stepS: T,
    stateNames: ['p', 'v'],
  });
}

/** DWPA: A = [[1, T, T²/2], [0, 1, T], [0, 0, 1]], Γ = [T²/2, T, 1]ᵀ, Q = σv² ΓΓᵀ (C4 α-β-γ setup). */
function dwpa(T: number, sigmaV: number): DiscreteModel {
  const g = [T * T / 2, T, 1];
  const v = sigmaV * sigmaV;
  return new DiscreteModel({
    A: [[1, T, T * T / 2], [0, 1, T], [0, 0, 1]],
    Q: g.map((gi) => g.map((gj) => v * gi * gj)),
    stepS: T,
    stateNames: ['p', 'v', 'a'],
  });
}

/** Kalata's closed form (Kalata 1984; REFERENCE-CHECKS C4), a plain computation independent of the filter. */
function kalata(lambda: number): { alpha: number; beta: number } {
  const r = Math.sqrt(lambda * lambda + 8 * lambda);
  return {
    alpha: -(lambda * lambda + 8 * lambda - (lambda + 4) * r) / 8,
    beta: (lambda * lambda + 4 * lambda - lambda * r) / 4,
  };
}

// REFERENCE-CHECKS C4, T = 1, σw = 1 (Kalata 1984; Bar-Shalom, Li, Kirubarajan 2001 §6.5, equation numbers from memory).
const alphaBetaTable: ReadonlyArray<{ lambda: number; alpha: number; beta: number; posterior: number[]; prior: number[] }> = [
  { lambda: 0.1, alpha: 0.36, beta: 0.08, posterior: [0.36, 0.08, 0.04], prior: [0.5625, 0.125, 0.05] },
  {
    lambda: 0.5, alpha: 0.628373457205, beta: 0.304805898399,
    posterior: [0.628373457205, 0.304805898399, 0.390388203202],
    prior: [1.690873457205, 0.820194101601, 0.640388203202],
  },
  { lambda: 1, alpha: 0.75, beta: 0.5, posterior: [0.75, 0.5, 1.0], prior: [3, 2, 2] },
  {
    lambda: 10, alpha: 0.978713763748, beta: 1.458980337503,
    posterior: [0.978713763748, 1.458980337503, 17.082039325],
    prior: [45.978713763748, 68.541019662497, 117.082039325],
  },
];

// REFERENCE-CHECKS C4 α-β-γ (DWPA) table, T = 1, σw = 1 (Kalata 1984; Gray & Murray 1993, from memory).
const alphaBetaGammaTable: ReadonlyArray<{ lambda: number; alpha: number; beta: number; gamma: number }> = [
  { lambda: 0.1, alpha: 0.604758751248, beta: 0.275753887886, gamma: 0.125736430481 },
  { lambda: 0.5, alpha: 0.795373662666, beta: 0.599826965403, gamma: 0.452356427316 },
  { lambda: 1, alpha: 0.864317940854, beta: 0.797962290433, gamma: 0.73670091393 },
  { lambda: 2, alpha: 0.918903335176, beta: 1.023094283389, gamma: 1.13909904626 },
];

// REFERENCE-CHECKS C4 contrast table: CWNA with q = λc² σw²/T³, T = 1, σw = 1 (computed there, two ways).
const cwnaTable: ReadonlyArray<{ lambda: number; alpha: number; beta: number }> = [
  { lambda: 0.1, alpha: 0.360591664527, beta: 0.079963012417 },
  { lambda: 1, alpha: 0.756738198274, beta: 0.493215776031 },
  { lambda: 10, alpha: 0.985803114066, beta: 1.191506858313 },
];

/** α, β from the gain K = [α, β/T]ᵀ. */
function alphaBeta(s: SteadyState, T: number): { alpha: number; beta: number } {
  return { alpha: s.gain[0]!, beta: s.gain[1]! * T };
}

describe('α-β steady state of the DWNA tracker (C4)', () => {
  it("gives the tabled α, β at T = 1, σw = 1 for λ = 0.1, 0.5, 1, 10", () => {
    for (const row of alphaBetaTable) {
      const { alpha, beta } = alphaBeta(iterate(dwna(1, row.lambda), 1, 1), 1);
      expectRelClose(alpha, row.alpha, REL, `α(λ=${row.lambda})`);
      expectRelClose(beta, row.beta, REL, `β(λ=${row.lambda})`);
    }
  });

  it("equals Kalata's closed form at T = 1, σw = 1 and at T = 0.5, σw = 2 with σv = λσw/T²", () => {
    for (const [T, sigmaW] of [[1, 1], [0.5, 2]] as const) {
      for (const { lambda } of alphaBetaTable) {
        const expected = kalata(lambda);
        const { alpha, beta } = alphaBeta(iterate(dwna(T, (lambda * sigmaW) / (T * T)), T, sigmaW), T);
        expectRelClose(alpha, expected.alpha, REL, `α(λ=${lambda}, T=${T})`);
        expectRelClose(beta, expected.beta, REL, `β(λ=${lambda}, T=${T})`);
      }
    }
  });

  it('reaches the tabled posterior and prior covariances at T = 1, σw = 1', () => {
    for (const row of alphaBetaTable) {
      const s = iterate(dwna(1, row.lambda), 1, 1);
      expectAllRelClose(tri(s.posteriorP), row.posterior, REL, `tri(P⁺)(λ=${row.lambda})`);
      expectAllRelClose(tri(s.priorP), row.prior, REL, `tri(P⁻)(λ=${row.lambda})`);
    }
  });

  it('reaches P⁺ = [[3, 4], [4, 16]] at λ = 1, T = 0.5, σw = 2', () => {
    // REFERENCE-CHECKS C4: "at λ = 1, P⁺ = [[3, 4], [4, 16]]".
    const s = iterate(dwna(0.5, 1 * 2 / 0.25), 0.5, 2);
    expectAllRelClose(s.posteriorP, [3, 4, 4, 16], REL, 'P⁺');
  });

  it('satisfies the posterior and prior covariance formulas at T = 0.5, σw = 2', () => {
    // C4 relations: P⁺11 = ασw², P⁺12 = βσw²/T, P⁺22 = β(α − β/2)σw²/((1 − α)T²),
    // P⁻11 = ασw²/(1 − α), P⁻12 = βσw²/((1 − α)T), evaluated on the tabled α, β.
    const T = 0.5;
    const w = 4;
    for (const { lambda, alpha: a, beta: b } of alphaBetaTable) {
      const s = iterate(dwna(T, (lambda * 2) / (T * T)), T, 2);
      expectAllRelClose(tri(s.posteriorP), [a * w, (b * w) / T, (b * (a - b / 2) * w) / ((1 - a) * T * T)], REL, `tri(P⁺)(λ=${lambda})`);
      expectAllRelClose([s.priorP[0]!, s.priorP[1]!], [(a * w) / (1 - a), (b * w) / ((1 - a) * T)], REL, `P⁻11, P⁻12 (λ=${lambda})`);
    }
  });

  it('satisfies λ² = β²/(1 − α) and β = 2(2 − α) − 4√(1 − α)', () => {
    for (const { lambda } of alphaBetaTable) {
      const { alpha, beta } = alphaBeta(iterate(dwna(1, lambda), 1, 1), 1);
      expectRelClose(beta * beta / (1 - alpha), lambda * lambda, REL, `λ²(λ=${lambda})`);
      expectRelClose(2 * (2 - alpha) - 4 * Math.sqrt(1 - alpha), beta, REL, `β relation (λ=${lambda})`);
    }
  });

  it('does not follow the Benedict–Bordner relation β = α²/(2 − α) (0.45 instead of 0.5 at λ = 1)', () => {
    // C4 trap: the Kalman steady state is not the Benedict–Bordner filter.
    const { alpha, beta } = alphaBeta(iterate(dwna(1, 1), 1, 1), 1);
    const benedictBordner = alpha * alpha / (2 - alpha);
    expectRelClose(benedictBordner, 0.45, REL, 'Benedict–Bordner β from the filter α');
    expect(Math.abs(beta - benedictBordner)).toBeGreaterThan(0.04);
  });
});

describe('α-β-γ steady state of the DWPA tracker (C4)', () => {
  it('gives the tabled α, β, γ with K = [α, β/T, γ/(2T²)] at T = 1, σw = 1', () => {
    for (const row of alphaBetaGammaTable) {
      const g = iterate(dwpa(1, row.lambda), 1, 1).gain;
      expectRelClose(g[0]!, row.alpha, REL, `α(λ=${row.lambda})`);
      expectRelClose(g[1]!, row.beta, REL, `β(λ=${row.lambda})`);
      expectRelClose(2 * g[2]!, row.gamma, REL, `γ(λ=${row.lambda})`);
    }
  });

  it('satisfies γ²/(4(1 − α)) = λ², β = 2(2 − α) − 4√(1 − α) and γ = β²/α', () => {
    for (const { lambda } of alphaBetaGammaTable) {
      const g = iterate(dwpa(1, lambda), 1, 1).gain;
      const [alpha, beta, gamma] = [g[0]!, g[1]!, 2 * g[2]!];
      expectRelClose(gamma * gamma / (4 * (1 - alpha)), lambda * lambda, REL, `λ²(λ=${lambda})`);
      expectRelClose(2 * (2 - alpha) - 4 * Math.sqrt(1 - alpha), beta, REL, `β relation (λ=${lambda})`);
      expectRelClose(beta * beta / alpha, gamma, REL, `γ relation (λ=${lambda})`);
    }
  });
});

describe('the CWNA model does not give Kalata’s gains (C4 contrast)', () => {
  /** ConstantVelocityModel with q = λc² σw²/T³ at T = 1, σw = 1. */
  const cwna = (lambda: number): ConstantVelocityModel =>
    new ConstantVelocityModel({ positionNames: ['p'], spectralDensity: lambda * lambda });

  it('gives the tabled CWNA α, β', () => {
    for (const row of cwnaTable) {
      const { alpha, beta } = alphaBeta(iterate(cwna(row.lambda), 1, 1), 1);
      expectRelClose(alpha, row.alpha, REL, `CWNA α(λc=${row.lambda})`);
      expectRelClose(beta, row.beta, REL, `CWNA β(λc=${row.lambda})`);
    }
  });

  it("differs from Kalata's α-β for the same nominal index by more than 1e-4", () => {
    for (const row of cwnaTable) {
      const { alpha, beta } = alphaBeta(iterate(cwna(row.lambda), 1, 1), 1);
      const expected = kalata(row.lambda);
      // At λc = 0.1 β differs by only 3.7e-5, α by 5.9e-4: the gain as a whole is what differs.
      expect(Math.max(Math.abs(alpha - expected.alpha), Math.abs(beta - expected.beta)), `λc=${row.lambda}`)
        .toBeGreaterThan(1e-4);
    }
  });
});
