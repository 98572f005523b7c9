import { describe, it, expect } from 'vitest';
import { gaussMarkovCoefficients, stepGaussMarkov } from '../../src/simulation/gauss-markov.js';
import { createPrng } from '../../src/simulation/prng.js';

describe('gaussMarkovCoefficients', () => {
  it('gives φ = exp(−dt/τ) and a drive keeping the variance at σ²', () => {
    const c = gaussMarkovCoefficients(0.1, 3600, 0.03);
    expect(c.phi).toBeCloseTo(Math.exp(-0.1 / 3600), 15);
    // Stationary variance of x[k+1] = φx[k] + w is q / (1 − φ²); it must equal σ².
    expect(c.driveSigma ** 2 / (1 - c.phi ** 2)).toBeCloseTo(0.03 ** 2, 12);
  });

  it('rejects a non-positive time constant', () => {
    expect(() => gaussMarkovCoefficients(0.1, 0, 0.03)).toThrow(RangeError);
  });
});

describe('stepGaussMarkov', () => {
  // The discretisation is exact for any step, so a step of one time constant samples the same
  // process as 36,000 steps of 0.1 s would, and a long run becomes affordable.
  const sigma = 0.03;
  const c = gaussMarkovCoefficients(3600, 3600, sigma);

  it('holds the sample variance near σ² over a long run', () => {
    const prng = createPrng('gm-variance');
    let x = sigma * prng.nextGaussian();
    const n = 40000;
    let sumSq = 0;
    for (let i = 0; i < n; i += 1) {
      x = stepGaussMarkov(x, c, prng);
      sumSq += x * x;
    }
    // Lag-one correlation e^-1 inflates the variance estimate's spread to about
    // σ²·sqrt(2(1 + φ²)/(n(1 − φ²))) ≈ 0.8 % of σ²; allow 5 %.
    expect(Math.abs(sumSq / n / sigma ** 2 - 1)).toBeLessThan(0.05);
  });

  it('has lag-one autocorrelation near φ', () => {
    const prng = createPrng('gm-correlation');
    let x = sigma * prng.nextGaussian();
    let sumXY = 0;
    let sumSq = 0;
    for (let i = 0; i < 40000; i += 1) {
      const next = stepGaussMarkov(x, c, prng);
      sumXY += x * next;
      sumSq += x * x;
      x = next;
    }
    expect(Math.abs(sumXY / sumSq - Math.exp(-1))).toBeLessThan(0.02);
  });
});
