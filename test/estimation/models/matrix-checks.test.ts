import { describe, it, expect } from 'vitest';
import { checkCovariance, checkShape } from '../../../src/estimation/models/matrix-checks.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';

function thrown(fn: () => unknown): ModelConfigError {
  try {
    fn();
  } catch (e) {
    if (e instanceof ModelConfigError) return e;
    throw e;
  }
  throw new Error('expected a ModelConfigError');
}

describe('checkShape', () => {
  it('flattens nested rows row-major', () => {
    expect(Array.from(checkShape('A', [[1, 2, 3], [4, 5, 6]], 2, 3))).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it('accepts a flat row-major array of the right length', () => {
    expect(Array.from(checkShape('A', new Float64Array([1, 2, 3, 4]), 2, 2))).toEqual([1, 2, 3, 4]);
  });

  it('returns a copy the caller cannot change through the input', () => {
    const input = new Float64Array([1, 2, 3, 4]);
    const out = checkShape('A', input, 2, 2);
    input[0] = 99;
    expect(out[0]).toBe(1);
  });

  it('names the expected and actual shape of nested rows', () => {
    const e = thrown(() => checkShape('A', [[1, 0], [0, 1], [0, 0]], 3, 3));
    expect(e.message).toBe('A must be 3×3, got 3×2');
    expect(e.path).toBe('A');
  });

  it('names the entry count of a flat array of the wrong length', () => {
    expect(() => checkShape('G', [1, 2, 3], 2, 2)).toThrow('G must be 2×2 (4 entries, row-major), got 3 entries');
  });

  it('rejects ragged rows', () => {
    expect(() => checkShape('A', [[1, 2], [3]], 2, 2)).toThrow('A must be 2×2, got a ragged array (row 1 has 1 entries');
  });

  it('names the position of a non-finite entry', () => {
    expect(() => checkShape('F', [[0, 1], [Infinity, 0]], 2, 2)).toThrow('F[1][0] must be a finite number, got Infinity');
  });
});

describe('checkCovariance', () => {
  it('accepts a positive-definite matrix and returns it flat', () => {
    expect(Array.from(checkCovariance('Q', [[2, 0.5], [0.5, 1]], 2))).toEqual([2, 0.5, 0.5, 1]);
  });

  it('accepts a singular PSD matrix (rank one)', () => {
    // [1, 2]ᵀ[1, 2] has eigenvalues 0 and 5.
    expect(() => checkCovariance('Q', [[1, 2], [2, 4]], 2)).not.toThrow();
  });

  it('accepts the zero matrix', () => {
    expect(() => checkCovariance('Q', [[0, 0], [0, 0]], 2)).not.toThrow();
  });

  it('symmetrizes an asymmetry within rounding tolerance', () => {
    const q = checkCovariance('Q', [[1, 0.3 + 1e-12], [0.3, 1]], 2);
    expect(q[1]).toBe(q[2]);
  });

  it('rejects an asymmetric matrix naming both entries', () => {
    expect(() => checkCovariance('R', [[1, 0.1], [0.2, 1]], 2)).toThrow('R is not symmetric: R[0][1] = 0.1 but R[1][0] = 0.2');
  });

  it('rejects an indefinite matrix naming its negative eigenvalue', () => {
    // diag(1, −0.02) has eigenvalue −0.02 exactly.
    const e = thrown(() => checkCovariance('Q', [[1, 0], [0, -0.02]], 2));
    expect(e.message).toMatch(/^Q is not positive semi-definite: eigenvalue -0\.02 \(expected ≥ -1e-12\)$/);
    expect(e.path).toBe('Q');
  });

  it('rejects a non-finite entry before the eigenvalue check', () => {
    expect(() => checkCovariance('Q', [[NaN, 0], [0, 1]], 2)).toThrow('Q[0][0] must be a finite number, got NaN');
  });

  it('rejects the wrong size', () => {
    expect(() => checkCovariance('Q', [[1, 0], [0, 1]], 3)).toThrow('Q must be 3×3, got 2×2');
  });
});
