/**
 * Reference check C10 of /work/shared/REFERENCE-CHECKS.md: Monte-Carlo consistency of the KF on
 * the C8 model (CWNA constant velocity, q = 0.5, T = 1, H = [1, 0], R = 1), N = 100 runs of
 * K = 100 steps. A consistent filter has NEES ≈ n = 2 and NIS ≈ m = 1 within the chi-square
 * regions of C2; a filter with Q × 0.1 does not. Source, as named there: Bar-Shalom, Li,
 * Kirubarajan, "Estimation with Applications to Tracking and Navigation" (Wiley 2001), §5.4
 * (NEES/NIS tests; from memory); the rates were measured by simulation there.
 *
 * The truth and the readings are simulated here with plain code (not the filter's model) from
 * the project's own PRNG at a fixed seed. REFERENCE-CHECKS C10 measured, over 300 seeds, that a
 * correct filter fails the pooled-ANIS check 3.7 % of the time and each ≥ 90 % fraction check
 * about 1 %; P(Binomial(100, 0.95) < 90) = 0.011472.
 */
import { describe, expect, it } from 'vitest';
import { nisBand } from '../../src/estimation/filters/consistency-band.js';
import { FilterWorkspace } from '../../src/estimation/filters/filter-workspace.js';
import { kalmanPredictInPlace } from '../../src/estimation/filters/kalman-predict.js';
import { kalmanUpdateInPlace } from '../../src/estimation/filters/kalman-update.js';
import { LinearMeasurement } from '../../src/estimation/measurements/linear-measurement.js';
import { ConstantVelocityModel } from '../../src/estimation/models/constant-velocity-model.js';
import { createPrng } from '../../src/simulation/prng.js';
import { expectAbsClose } from './reference-asserts.js';

const RUNS = 100;
const STEPS = 100;
const SEED = 20240601;
const T = 1;
const q = 0.5;
const R = 1;

// REFERENCE-CHECKS C10 acceptance regions (95 % two-sided, exact, from C2; Bar-Shalom, Li,
// Kirubarajan 2001 §5.4, from memory).
const POOLED_ANIS_BAND = { lower: 0.972472, upper: 1.027907 }; // χ²(10⁴)/10⁴
const STEP_ANEES_BAND = { lower: 1.62728, upper: 2.410579 }; // χ²(200)/100
const STEP_ANIS_BAND = { lower: 0.742219, upper: 1.295612 }; // χ²(100)/100
const MIN_FRACTION_INSIDE = 0.9;

interface Consistency {
  readonly pooledAnis: number;
  readonly aneesFractionInside: number;
  readonly anisFractionInside: number;
}

/**
 * Simulates the truth x(k+1) = F x(k) + w, w ~ N(0, Q), z = x₁ + v, v ~ N(0, R) with x(1) ~
 * N([0, 1], diag(4, 1)), and runs a filter whose spectral density is q·qScale from that prior
 * (the first reading updates the prior directly, as in C8).
 */
function monteCarlo(qScale: number): Consistency {
  const process = new ConstantVelocityModel({ positionNames: ['p'], spectralDensity: q * qScale });
  const sensor = new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [R] });
  const ws = new FilterWorkspace(2, 1);
  // Cholesky factor of the true Q = q[[T³/3, T²/2], [T²/2, T]], by hand.
  const l11 = Math.sqrt((q * T ** 3) / 3);
  const l21 = (q * T ** 2) / 2 / l11;
  const l22 = Math.sqrt(q * T - l21 * l21);
  const nees = new Float64Array(STEPS);
  const nis = new Float64Array(STEPS);
  const root = createPrng(SEED);
  const x = new Float64Array(2);
  const P = new Float64Array(4);
  for (let run = 0; run < RUNS; run++) {
    const prng = root.fork(`run-${run}`);
    let p = 0 + 2 * prng.nextGaussian();
    let v = 1 + 1 * prng.nextGaussian();
    x.set([0, 1]);
    P.set([4, 0, 0, 1]);
    for (let k = 0; k < STEPS; k++) {
      if (k > 0) {
        const w1 = prng.nextGaussian();
        const w2 = prng.nextGaussian();
        p += T * v + l11 * w1;
        v += l21 * w1 + l22 * w2;
        if (!kalmanPredictInPlace(process, T, x, P, ws)) throw new Error(`run ${run} step ${k}: prediction failed`);
      }
      const z = p + Math.sqrt(R) * prng.nextGaussian();
      const verdict = kalmanUpdateInPlace(sensor, Float64Array.of(z), sensor.R, Infinity, x, P, ws);
      if (verdict !== 'applied') throw new Error(`run ${run} step ${k}: ${verdict}`);
      nis[k]! += ws.nis;
      // eᵀP⁻¹e with the 2×2 inverse written out.
      const e1 = p - x[0]!;
      const e2 = v - x[1]!;
      const det = P[0]! * P[3]! - P[1]! * P[2]!;
      nees[k]! += (P[3]! * e1 * e1 - (P[1]! + P[2]!) * e1 * e2 + P[0]! * e2 * e2) / det;
    }
  }
  let pooled = 0;
  let aneesInside = 0;
  let anisInside = 0;
  for (let k = 0; k < STEPS; k++) {
    const anees = nees[k]! / RUNS;
    const anis = nis[k]! / RUNS;
    if (!Number.isFinite(anees) || !Number.isFinite(anis)) throw new Error(`step ${k}: ANEES ${anees}, ANIS ${anis}`);
    pooled += nis[k]!;
    if (anees >= STEP_ANEES_BAND.lower && anees <= STEP_ANEES_BAND.upper) aneesInside += 1;
    if (anis >= STEP_ANIS_BAND.lower && anis <= STEP_ANIS_BAND.upper) anisInside += 1;
  }
  return { pooledAnis: pooled / (RUNS * STEPS), aneesFractionInside: aneesInside / STEPS, anisFractionInside: anisInside / STEPS };
}

describe('Monte-Carlo consistency (C10)', () => {
  const correct = monteCarlo(1);
  const overconfident = monteCarlo(0.1);
  const underconfident = monteCarlo(10);

  it('takes its acceptance regions from nisBand, equal to the tabled ones to 1e-6', () => {
    // C2/C10: N·mean ~ χ²(N·m); per-step ANEES is the m = 2, N = 100 case of the same band.
    const pooled = nisBand(1, RUNS * STEPS, 0.95);
    const anees = nisBand(2, RUNS, 0.95);
    const anis = nisBand(1, RUNS, 0.95);
    expectAbsClose(pooled.lower, POOLED_ANIS_BAND.lower, 1e-6, 'pooled ANIS lower');
    expectAbsClose(pooled.upper, POOLED_ANIS_BAND.upper, 1e-6, 'pooled ANIS upper');
    expectAbsClose(anees.lower, STEP_ANEES_BAND.lower, 1e-6, 'ANEES lower');
    expectAbsClose(anees.upper, STEP_ANEES_BAND.upper, 1e-6, 'ANEES upper');
    expectAbsClose(anis.lower, STEP_ANIS_BAND.lower, 1e-6, 'ANIS lower');
    expectAbsClose(anis.upper, STEP_ANIS_BAND.upper, 1e-6, 'ANIS upper');
  });

  it('keeps the pooled ANIS of the correct filter inside [0.972472, 1.027907]', () => {
    expect(correct.pooledAnis).toBeGreaterThanOrEqual(POOLED_ANIS_BAND.lower);
    expect(correct.pooledAnis).toBeLessThanOrEqual(POOLED_ANIS_BAND.upper);
  });

  it('keeps the per-step ANEES of the correct filter inside [1.627280, 2.410579] for ≥ 90 % of steps', () => {
    expect(correct.aneesFractionInside).toBeGreaterThanOrEqual(MIN_FRACTION_INSIDE);
  });

  it('keeps the per-step ANIS of the correct filter inside [0.742219, 1.295612] for ≥ 90 % of steps', () => {
    expect(correct.anisFractionInside).toBeGreaterThanOrEqual(MIN_FRACTION_INSIDE);
  });

  it('fails all three checks with Q × 0.1', () => {
    // C10 measured a pooled ANIS of about 2.45 and 1 % of steps inside for this mismodelling.
    expect(overconfident.pooledAnis).toBeGreaterThan(POOLED_ANIS_BAND.upper);
    expect(overconfident.aneesFractionInside).toBeLessThan(MIN_FRACTION_INSIDE);
    expect(overconfident.anisFractionInside).toBeLessThan(MIN_FRACTION_INSIDE);
  });

  it('fails all three checks with Q × 10', () => {
    // C10 measured a pooled ANIS of about 0.53 and 1 % of ANEES steps inside for this mismodelling.
    expect(underconfident.pooledAnis).toBeLessThan(POOLED_ANIS_BAND.lower);
    expect(underconfident.aneesFractionInside).toBeLessThan(MIN_FRACTION_INSIDE);
    expect(underconfident.anisFractionInside).toBeLessThan(MIN_FRACTION_INSIDE);
  });
});
