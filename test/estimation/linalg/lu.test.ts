import { describe, it, expect } from 'vitest';
import { luFactorInto, luSolveInPlace } from '../../../src/estimation/linalg/lu.js';
import { matMulInto } from '../../../src/estimation/linalg/multiply.js';
import { expectCloseToMatrix } from '../models/close-to-matrix.js';

describe('luFactorInto / luSolveInPlace', () => {
  it('solves a system whose first pivot is zero (needs a row swap)', () => {
    // Exact solution chosen first, right-hand side formed from it: x = [1, −2, 3].
    const a = new Float64Array([0, 2, 1, 1, 1, 1, 2, 1, 3]);
    const x = new Float64Array([1, -2, 3]);
    const b = new Float64Array(3);
    matMulInto(a, x, 3, 3, 1, b);
    const lu = new Float64Array(9);
    const piv = new Int32Array(3);
    expect(luFactorInto(a, 3, lu, piv)).toBe(true);
    luSolveInPlace(lu, piv, 3, b, 1);
    expectCloseToMatrix(b, x, 1e-14);
  });

  it('solves several right-hand sides at once (A·X = I gives the inverse)', () => {
    const a = new Float64Array([4, -2, 1, 3, 6, -4, 2, 1, 8]);
    const lu = new Float64Array(9);
    const piv = new Int32Array(3);
    luFactorInto(a, 3, lu, piv);
    const inv = new Float64Array([1, 0, 0, 0, 1, 0, 0, 0, 1]);
    luSolveInPlace(lu, piv, 3, inv, 3);
    const prod = new Float64Array(9);
    matMulInto(a, inv, 3, 3, 3, prod);
    expectCloseToMatrix(prod, [1, 0, 0, 0, 1, 0, 0, 0, 1], 1e-14);
  });

  it('factors in place when the output aliases the input', () => {
    const a = new Float64Array([2, 1, 1, 3]);
    const piv = new Int32Array(2);
    expect(luFactorInto(a, 2, a, piv)).toBe(true);
    const b = new Float64Array([3, 4]); // A·[1, 1]
    luSolveInPlace(a, piv, 2, b, 1);
    expectCloseToMatrix(b, [1, 1], 1e-15);
  });

  it('reports a singular matrix', () => {
    const a = new Float64Array([1, 2, 2, 4]);
    expect(luFactorInto(a, 2, new Float64Array(4), new Int32Array(2))).toBe(false);
  });

  it('reports a matrix with a NaN entry', () => {
    const a = new Float64Array([NaN, 0, 0, 1]);
    expect(luFactorInto(a, 2, new Float64Array(4), new Int32Array(2))).toBe(false);
  });
});
