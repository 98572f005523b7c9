import { describe, expect, it } from 'vitest';
import { fitsMask, maskKey, resetMask, widenMask } from '../../../src/estimation/linalg/nonzero-mask.js';
import { compiledKernel, compiledKernelCount } from '../../../src/estimation/linalg/kernel-cache.js';

describe('nonzero masks', () => {
  it('fits a matrix whose nonzeros lie inside the mask, even with zeros where the mask is set', () => {
    const mask = Uint8Array.of(1, 1, 0, 1);
    expect(fitsMask(Float64Array.of(2, 0, 0, 3), mask, 4)).toBe(true);
    expect(fitsMask(Float64Array.of(2, 0, 1, 3), mask, 4)).toBe(false);
    expect(fitsMask(Float64Array.of(2, 0, Number.NaN, 3), mask, 4)).toBe(false);
  });

  it('widens to the union and resets to the exact pattern', () => {
    const mask = Uint8Array.of(1, 0, 0, 0);
    widenMask(Float64Array.of(0, 0, 5, 0), mask, 4);
    expect(Array.from(mask)).toEqual([1, 0, 1, 0]);
    resetMask(Float64Array.of(0, 7, 0, 0), mask, 4);
    expect(Array.from(mask)).toEqual([0, 1, 0, 0]);
  });

  it('gives distinct keys to distinct masks of the same length', () => {
    const keys = new Set<string>();
    for (let bits = 0; bits < 64; bits++) {
      const mask = Uint8Array.from({ length: 6 }, (_, i) => (bits >> i) & 1);
      keys.add(maskKey(mask, 6));
    }
    expect(keys.size).toBe(64);
  });
});

describe('compiledKernel', () => {
  it('compiles once per key and stays bounded', () => {
    const f = compiledKernel<(a: number) => number>('test:double', ['a'], () => 'return 2 * a;')!;
    expect(f(4)).toBe(8);
    let builds = 0;
    const g = compiledKernel<(a: number) => number>('test:double', ['a'], () => { builds++; return 'return 0;'; });
    expect(g).toBe(f);
    expect(builds).toBe(0);
    for (let k = 0; k < 200; k++) compiledKernel(`test:${k}`, [], () => `return ${k};`);
    expect(compiledKernelCount()).toBeLessThanOrEqual(64);
  });
});
