/**
 * Reference check C6 of /work/shared/REFERENCE-CHECKS.md: estimating a random constant with
 * A = H = 1, Q = 1e-5, x̂0 = 0, P0 = 1, 50 readings z ~ N(−0.37727, 0.1²). Sources, as named
 * there: G. Welch, G. Bishop, "An Introduction to the Kalman Filter", TR 95-041, Univ. of North
 * Carolina at Chapel Hill (1995, later revisions), §3 "estimating a random constant" (section
 * number from memory); the Q = 0 closed form: Gelb (ed.), "Applied Optimal Estimation" (1974),
 * ch. 4 (from memory).
 * P⁻_k, K_k and P_k do not depend on the noise draw, so they are fixed checks (rel 1e-10); the
 * estimate x̂ does, so it is only checked statistically. Readings come from the project PRNG.
 */
import { describe, expect, it } from 'vitest';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { kalmanUpdateInPlace } from '../../src/estimation/filters/kalman-update.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { DiscreteModel } from '../../src/estimation/models/discrete-model.js';
import { createPrng } from '../../src/simulation/prng.js';
import { expectAbsClose, expectAllRelClose, expectRelClose } from './reference-asserts.js';

const REL = 1e-10;
const TRUE_X = -0.37727;
const READING_SIGMA = 0.1;
const READINGS = 50;

interface Sequence {
  /** Index k − 1 holds P⁻_k, K_k, P_k and x̂_k. */
  readonly priorP: number[];
  readonly gain: number[];
  readonly posteriorP: number[];
  readonly estimate: number[];
}

/**
 * Runs the kernels over 50 readings. Convention 'A' (the paper's loop) predicts before every
 * update, so P⁻_1 = P0 + Q; convention 'B' takes (x̂0, P0) as the prior of the first reading.
 */
function run(convention: 'A' | 'B', r: number, q: number, seed: string): Sequence {
  const process = new DiscreteModel({ A: [[1]], Q: [[q]], stepS: 1 });
  const sensor = new LinearMeasurement({ C: [1], dim: 1, stateDim: 1, Rv: [r] });
  const ws = new FilterWorkspace(1, 1);
  const prng = createPrng(seed);
  const x = Float64Array.of(0);
  const P = Float64Array.of(1);
  const out: Sequence = { priorP: [], gain: [], posteriorP: [], estimate: [] };
  for (let k = 1; k <= READINGS; k++) {
    if ((convention === 'A' || k > 1) && !kalmanPredictInPlace(process, 1, x, P, ws)) throw new Error(`prediction ${k} failed`);
    out.priorP.push(P[0]!);
    const z = TRUE_X + READING_SIGMA * prng.nextGaussian();
    const verdict = kalmanUpdateInPlace(sensor, Float64Array.of(z), sensor.R, Infinity, x, P, ws);
    if (verdict !== 'applied') throw new Error(`update ${k}: ${verdict}`);
    out.gain.push(ws.K[0]!);
    out.posteriorP.push(P[0]!);
    out.estimate.push(x[0]!);
  }
  return out;
}

// REFERENCE-CHECKS C6, convention A (Welch & Bishop 1995, §3, section number from memory).
const conventionA: ReadonlyArray<readonly [r: number, k: number, priorP: number, gain: number, posteriorP: number]> = [
  [0.01, 1, 1.00001, 0.99009910793, 0.0099009910793],
  [0.01, 2, 0.0099109910793, 0.497764829477, 0.00497764829477],
  [0.01, 10, 0.00114493723472, 0.102731600063, 0.00102731600063],
  [0.01, 50, 3.51121229737e-4, 0.0339210817789, 3.39210817789e-4],
  [1, 1, 1.00001, 0.500002499988, 0.500002499988],
  [1, 10, 0.100038497806, 0.090940906164, 0.090940906164],
  [1, 50, 0.0201714230208, 0.019772581907, 0.019772581907],
  [1e-4, 1, 1.00001, 0.999900010999, 9.99900010999e-5],
  [1e-4, 50, 3.70156211872e-5, 0.270156211872, 2.70156211872e-5],
];

// REFERENCE-CHECKS C6, convention B, R = 0.01: P_k at k = 1, 2, 10, 50.
const conventionB: ReadonlyArray<readonly [k: number, posteriorP: number]> = [
  [1, 0.00990099009901],
  [2, 0.0049776480475],
  [10, 0.00102731599097],
  [50, 3.39210817605e-4],
];

describe('Welch & Bishop random constant (C6)', () => {
  it('reproduces the convention-A P⁻_k, K_k, P_k for R = 0.01, 1, 1e-4', () => {
    for (const [r, k, priorP, gain, posteriorP] of conventionA) {
      const s = run('A', r, 1e-5, 'random-constant');
      expectRelClose(s.priorP[k - 1]!, priorP, REL, `P⁻_${k} (R=${r})`);
      expectRelClose(s.gain[k - 1]!, gain, REL, `K_${k} (R=${r})`);
      expectRelClose(s.posteriorP[k - 1]!, posteriorP, REL, `P_${k} (R=${r})`);
    }
  });

  it('reproduces the convention-B P_k for R = 0.01', () => {
    const s = run('B', 0.01, 1e-5, 'random-constant');
    for (const [k, posteriorP] of conventionB) expectRelClose(s.posteriorP[k - 1]!, posteriorP, REL, `P_${k}`);
  });

  it('gives the same P⁻_k, K_k, P_k for another noise draw but a different estimate', () => {
    const a = run('A', 0.01, 1e-5, 'random-constant');
    const b = run('A', 0.01, 1e-5, 'random-constant-other-draw');
    expectAllRelClose(b.priorP, a.priorP, 1e-15, 'P⁻');
    expectAllRelClose(b.gain, a.gain, 1e-15, 'K');
    expectAllRelClose(b.posteriorP, a.posteriorP, 1e-15, 'P');
    // x̂ depends on the draw, so it is not a fixed check value.
    expect(Math.abs(a.estimate[READINGS - 1]! - b.estimate[READINGS - 1]!)).toBeGreaterThan(1e-6);
  });

  it('ends within four standard deviations √P_50 of the true constant', () => {
    // The filter's R = 0.01 equals the reading variance 0.1², so √P_50 is the honest error scale.
    for (const seed of ['random-constant', 'random-constant-other-draw']) {
      const s = run('A', 0.01, 1e-5, seed);
      expect(Math.abs(s.estimate[READINGS - 1]! - TRUE_X), seed).toBeLessThanOrEqual(4 * Math.sqrt(s.posteriorP[READINGS - 1]!));
    }
  });

  it('follows P_k = P0 R/(R + k P0) with Q = 0 (a pure constant)', () => {
    // Gelb 1974, ch. 4 (from memory); a plain evaluation of the closed form for every k.
    const r = 0.01;
    const p0 = 1;
    const s = run('A', r, 0, 'random-constant');
    const expected = s.posteriorP.map((_, i) => (p0 * r) / (r + (i + 1) * p0));
    expectAllRelClose(s.posteriorP, expected, REL, 'P_k');
  });

  it('gives the tabled P_50 = 1.99960008e-4 with Q = 0, P0 = 1, R = 0.01', () => {
    // REFERENCE-CHECKS C6 "Also" (Gelb 1974, ch. 4, from memory): half a unit of the last printed digit.
    expectAbsClose(run('A', 0.01, 0, 'random-constant').posteriorP[READINGS - 1]!, 1.99960008e-4, 5e-13, 'P_50');
  });
});
