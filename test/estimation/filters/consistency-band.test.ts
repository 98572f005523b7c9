import { describe, it, expect } from 'vitest';
import { gateProbability, gateThreshold, nisBand, whitenessBound } from '../../../src/estimation/filters/consistency-band.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';

describe('gateThreshold', () => {
  it('returns Infinity for probability 1 (no gate)', () => {
    expect(gateThreshold(3, 1)).toBe(Number.POSITIVE_INFINITY);
  });

  it('is the inverse of gateProbability', () => {
    for (const m of [1, 2, 4, 9]) {
      for (const p of [0.9, 0.99, 0.9999]) expect(gateProbability(m, Math.sqrt(gateThreshold(m, p)))).toBeCloseTo(p, 13);
    }
  });

  it('throws ModelConfigError naming the field for a bad dimension or probability', () => {
    expect(() => gateThreshold(0, 0.99)).toThrow(ModelConfigError);
    expect(() => gateThreshold(1.5, 0.99)).toThrow(/measurementDim must be an integer ≥ 1, got 1.5/);
    expect(() => gateThreshold(2, 0)).toThrow(/gateProbability must lie strictly between 0 and 1, got 0/);
    expect(() => gateThreshold(2, Number.NaN)).toThrow(ModelConfigError);
  });
});

describe('gateProbability', () => {
  it('is 0 for a zero-sigma gate and throws for a negative one', () => {
    expect(gateProbability(2, 0)).toBe(0);
    expect(() => gateProbability(2, -1)).toThrow(/gateSigmas must be a finite number ≥ 0, got -1/);
  });
});

describe('nisBand', () => {
  it('brackets m and narrows as the window grows', () => {
    let previousWidth = Number.POSITIVE_INFINITY;
    for (const n of [1, 5, 20, 200]) {
      const band = nisBand(3, n, 0.95);
      expect(band.lower).toBeLessThan(3);
      expect(band.upper).toBeGreaterThan(3);
      expect(band.upper - band.lower).toBeLessThan(previousWidth);
      previousWidth = band.upper - band.lower;
    }
  });

  it('widens with the confidence', () => {
    const narrow = nisBand(2, 30, 0.9);
    const wide = nisBand(2, 30, 0.999);
    expect(wide.lower).toBeLessThan(narrow.lower);
    expect(wide.upper).toBeGreaterThan(narrow.upper);
  });

  it('throws ModelConfigError for a bad window or confidence', () => {
    expect(() => nisBand(2, 0, 0.95)).toThrow(/windowN must be an integer ≥ 1, got 0/);
    expect(() => nisBand(2, 10, 1)).toThrow(/confidence must lie strictly between 0 and 1, got 1/);
  });
});

describe('whitenessBound', () => {
  it('falls as 1/√K', () => {
    expect(whitenessBound(400, 0.95) * 2).toBeCloseTo(whitenessBound(100, 0.95), 14);
  });

  it('throws ModelConfigError for a bad sample count', () => {
    expect(() => whitenessBound(0, 0.95)).toThrow(/whitenessSamples must be an integer ≥ 1, got 0/);
  });
});
