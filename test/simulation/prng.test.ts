import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { Prng, createPrng } from '../../src/simulation/prng.js';

describe('Prng', () => {
  it('matches the xoshiro128** reference algorithm from state (1, 2, 3, 4)', () => {
    // Expected values: the C reference code published with Blackman & Vigna (2021), compiled
    // with gcc and run from s = {1, 2, 3, 4}; outputs 1-8 and output 1001.
    const prng = new Prng([1, 2, 3, 4]);
    const first = Array.from({ length: 8 }, () => prng.nextUint32());
    expect(first).toEqual([
      11520, 0, 5927040, 70819200, 2031721883, 1637235492, 1287239034, 3734860849,
    ]);
    for (let i = 0; i < 992; i += 1) prng.nextUint32();
    expect(prng.nextUint32()).toBe(136054147);
  });

  it('rejects an all-zero state', () => {
    expect(() => new Prng([0, 0, 0, 0])).toThrow(RangeError);
  });

  it('repeats the same stream for the same seed', () => {
    const a = createPrng(20240611);
    const b = createPrng(20240611);
    const drawsA = Array.from({ length: 50 }, () => a.nextGaussian());
    const drawsB = Array.from({ length: 50 }, () => b.nextGaussian());
    expect(drawsA).toEqual(drawsB);
  });

  it('gives different streams for different seeds', () => {
    expect(createPrng(1).nextUint32()).not.toBe(createPrng(2).nextUint32());
  });

  it('treats a number seed as its decimal string', () => {
    expect(createPrng(42).nextUint32()).toBe(createPrng('42').nextUint32());
  });

  it('derives a fork from the key and label only, not from draws already made', () => {
    const fresh = createPrng(7).fork('tank-a');
    const used = createPrng(7);
    for (let i = 0; i < 123; i += 1) used.nextFloat();
    const late = used.fork('tank-a');
    expect(late.nextUint32()).toBe(fresh.nextUint32());
  });

  it('gives different forks for different labels', () => {
    const root = createPrng(7);
    const a = root.fork('tug-01');
    const b = root.fork('tug-02');
    expect([a.nextUint32(), a.nextUint32()]).not.toEqual([b.nextUint32(), b.nextUint32()]);
  });

  it('draws floats in [0, 1)', () => {
    fc.assert(
      fc.property(fc.integer(), (seed) => {
        const prng = createPrng(seed);
        for (let i = 0; i < 20; i += 1) {
          const x = prng.nextFloat();
          if (!(x >= 0 && x < 1)) return false;
        }
        return true;
      }),
    );
  });

  it('draws integers in [0, n) for any n', () => {
    fc.assert(
      fc.property(fc.integer(), fc.integer({ min: 1, max: 2 ** 32 }), (seed, n) => {
        const x = createPrng(seed).nextInt(n);
        return Number.isInteger(x) && x >= 0 && x < n;
      }),
    );
  });

  it('rejects a non-integer or out-of-range bound in nextInt', () => {
    const prng = createPrng(1);
    expect(() => prng.nextInt(0)).toThrow(RangeError);
    expect(() => prng.nextInt(2.5)).toThrow(RangeError);
  });

  it('spreads nextInt(6) evenly (chi-square below the 0.999 point for 5 dof)', () => {
    const prng = createPrng('dice');
    const counts = [0, 0, 0, 0, 0, 0];
    const n = 60000;
    for (let i = 0; i < n; i += 1) counts[prng.nextInt(6)]! += 1;
    const expected = n / 6;
    const chi2 = counts.reduce((acc, c) => acc + (c - expected) ** 2 / expected, 0);
    // 20.51500565: chi-square 0.999 quantile for 5 degrees of freedom (REFERENCE-CHECKS C1).
    expect(chi2).toBeLessThan(20.51500565);
  });

  it('draws standard normal deviates (mean near 0, variance near 1)', () => {
    const prng = createPrng('gauss');
    const n = 200000;
    let sum = 0;
    let sumSq = 0;
    for (let i = 0; i < n; i += 1) {
      const z = prng.nextGaussian();
      sum += z;
      sumSq += z * z;
    }
    const mean = sum / n;
    const variance = sumSq / n - mean * mean;
    // Standard errors: mean 1/sqrt(n) = 0.0022, variance sqrt(2/n) = 0.0032; allow ~5 of each.
    expect(Math.abs(mean)).toBeLessThan(0.011);
    expect(Math.abs(variance - 1)).toBeLessThan(0.016);
  });

  it('puts about 68.3 % of normal deviates within one sigma', () => {
    const prng = createPrng('tails');
    const n = 100000;
    let inside = 0;
    for (let i = 0; i < n; i += 1) if (Math.abs(prng.nextGaussian()) < 1) inside += 1;
    // P(|Z| < 1) = 0.682689; binomial standard error 0.0015.
    expect(Math.abs(inside / n - 0.682689)).toBeLessThan(0.0075);
  });
});
