import { describe, it, expect } from 'vitest';
import { erf, erfc, normalCdf, normalQuantile } from '../../../src/estimation/filters/normal-distribution.js';

function relErr(actual: number, expected: number): number {
  return Math.abs(actual - expected) / Math.abs(expected);
}

/**
 * erfc(x) by its asymptotic series e^(−x²)/(x√π)·Σ (−1)ⁿ(2n − 1)!!/(2x²)ⁿ (Abramowitz & Stegun
 * 1964, eq. 7.1.23; from memory), summed while the terms shrink: for x ≥ 6 the smallest term is
 * below 1e-16 of the sum, so this is an independent full-precision reference in the far tail.
 */
function asymptoticErfc(x: number): number {
  const twoX2 = 2 * x * x;
  let term = 1;
  let sum = 1;
  for (let n = 1; n < 200; n++) {
    const next = (-term * (2 * n - 1)) / twoX2;
    if (Math.abs(next) >= Math.abs(term)) break;
    term = next;
    sum += term;
  }
  return (Math.exp(-x * x) / (x * Math.sqrt(Math.PI))) * sum;
}

describe('erf', () => {
  it('matches the tabulated values at 0.5, 1, 1.5 and 2', () => {
    // Abramowitz & Stegun 1964, Table 7.1 (15 decimals; from memory, checked to 30 digits).
    expect(erf(0.5)).toBeCloseTo(0.520499877813047, 15);
    expect(erf(1)).toBeCloseTo(0.842700792949715, 15);
    expect(erf(1.5)).toBeCloseTo(0.966105146475311, 15);
    expect(erf(2)).toBeCloseTo(0.995322265018953, 15);
  });

  it('keeps relative precision near 0 and is odd', () => {
    // erf(x) = (2/√π)(x − x³/3 + …): the cubic term is below 1e-20 of x here.
    expect(relErr(erf(1e-10), (2 / Math.sqrt(Math.PI)) * 1e-10)).toBeLessThan(1e-15);
    for (const x of [0.3, 1.7, 4]) expect(erf(-x)).toBe(-erf(x));
  });
});

describe('erfc', () => {
  it('agrees with the asymptotic series in the far tail', () => {
    for (const x of [6, 7.5, 10, 15, 20, 26]) expect(relErr(erfc(x), asymptoticErfc(x))).toBeLessThan(1e-14);
  });

  it('agrees with the Taylor expansion about 1 on both sides of the series/fraction switch', () => {
    // erfc(1) = 1 − 0.842700792949715 (Abramowitz & Stegun 1964, Table 7.1; from memory);
    // erfc′ = −s, erfc″ = 2s, erfc‴ = −2s at 1, with s = (2/√π)e^(−1).
    const erfc1 = 1 - 0.842700792949715;
    const s = (2 / Math.sqrt(Math.PI)) * Math.exp(-1);
    for (const h of [-1e-4, -1e-9, 1e-9, 1e-4]) {
      const taylor = erfc1 - s * h + s * h * h - (s / 3) * h * h * h;
      expect(relErr(erfc(1 + h), taylor)).toBeLessThan(1e-14);
    }
  });

  it('reflects as erfc(−x) = 2 − erfc(x) and equals 1 at 0', () => {
    expect(erfc(0)).toBe(1);
    for (const x of [0.2, 1, 3]) expect(erfc(-x)).toBeCloseTo(2 - erfc(x), 15);
  });

  it('underflows to 0 beyond the subnormal range and passes NaN through', () => {
    expect(erfc(30)).toBe(0);
    expect(erfc(Number.NaN)).toBeNaN();
  });
});

describe('normalQuantile', () => {
  it('squares to the chi-square 1-dof gates of C1', () => {
    // Φ⁻¹((1 + p)/2)² = γ(p) for m = 1: γ(0.95) = 3.841458821, γ(0.99) = 6.634896601,
    // γ(0.999) = 10.82756617 (REFERENCE-CHECKS C1, full-precision columns, tolerance 1e-8).
    expect(normalQuantile(0.975) ** 2).toBeCloseTo(3.841458821, 8);
    expect(normalQuantile(0.995) ** 2).toBeCloseTo(6.634896601, 8);
    expect(normalQuantile(0.9995) ** 2).toBeCloseTo(10.82756617, 7);
  });

  it('round-trips through normalCdf from 1e-300 to the centre', () => {
    for (let e = -300; e <= -1; e += 7) {
      const p = 10 ** e;
      const x = normalQuantile(p);
      // dΦ/Φ ≈ |x|·dx in the tail, so the last-bit error of x shows up magnified by x².
      expect(relErr(normalCdf(x), p)).toBeLessThan(1e-15 * (4 + 2 * x * x));
    }
    for (const p of [0.05, 0.2, 0.3, 0.45, 0.4999999]) expect(relErr(normalCdf(normalQuantile(p)), p)).toBeLessThan(1e-14);
  });

  it('keeps relative precision just off the median', () => {
    // Φ(x) = 1/2 + (x/√(2π))(1 − x²/6 + …), so Φ⁻¹(1/2 + d) = √(2π)·d·(1 + O(d²)).
    for (const p of [0.5 + 1e-10, 0.5 - 2 ** -30, 0.5 + 1e-6]) {
      const d = p - 0.5; // exact (Sterbenz)
      expect(relErr(normalQuantile(p), Math.sqrt(2 * Math.PI) * d)).toBeLessThan(1e-11);
    }
  });

  it('is antisymmetric about 1/2', () => {
    // Powers of two, so that 1 − p is exact and both sides ask for the same tail.
    for (const p of [2 ** -30, 2 ** -7, 0.25]) expect(normalQuantile(1 - p)).toBe(-normalQuantile(p));
    expect(normalQuantile(0.5)).toBe(0);
  });

  it('returns ±Infinity at 0 and 1 and NaN outside [0, 1]', () => {
    expect(normalQuantile(0)).toBe(Number.NEGATIVE_INFINITY);
    expect(normalQuantile(1)).toBe(Number.POSITIVE_INFINITY);
    expect(normalQuantile(-0.1)).toBeNaN();
    expect(normalQuantile(Number.NaN)).toBeNaN();
  });
});
