import { describe, it, expect } from 'vitest';
import { checkPerAxis, checkPositiveFinite, checkStateNames } from '../../../src/estimation/models/parameter-checks.js';

describe('checkPositiveFinite', () => {
  it('returns a positive finite value', () => {
    expect(checkPositiveFinite('tauS', 2.5)).toBe(2.5);
  });

  it.each([0, -1, NaN, Infinity])('rejects %s naming the field', (v) => {
    expect(() => checkPositiveFinite('tauS', v)).toThrow(`tauS must be a positive finite number, got ${String(v)}`);
  });
});

describe('checkPerAxis', () => {
  it('broadcasts a scalar to every axis', () => {
    expect(Array.from(checkPerAxis('spectralDensity', 0.5, 3))).toEqual([0.5, 0.5, 0.5]);
  });

  it('rejects an array of the wrong length', () => {
    expect(() => checkPerAxis('spectralDensity', [1, 2, 3], 2)).toThrow(
      'spectralDensity must be a number or an array of 2 (one per axis), got 3 entries',
    );
  });

  it('names the index of a bad entry', () => {
    expect(() => checkPerAxis('sigma', [1, -2], 2)).toThrow('sigma[1] must be a positive finite number, got -2');
  });
});

describe('checkStateNames', () => {
  it('returns a frozen copy', () => {
    const names = checkStateNames('stateNames', ['level', 'level_rate']);
    expect(names).toEqual(['level', 'level_rate']);
    expect(Object.isFrozen(names)).toBe(true);
  });

  it('rejects a duplicate name', () => {
    expect(() => checkStateNames('stateNames', ['level', 'level'])).toThrow("stateNames has the duplicate state name 'level'");
  });

  it('rejects an empty name', () => {
    expect(() => checkStateNames('stateNames', ['level', ''])).toThrow('stateNames[1] must be a non-empty string, got ""');
  });

  it('rejects the wrong count', () => {
    expect(() => checkStateNames('stateNames', ['a', 'b', 'c'], 2)).toThrow('stateNames must have 2 entries, got 3');
  });
});
