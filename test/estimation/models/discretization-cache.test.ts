import { describe, it, expect } from 'vitest';
import { DiscretizationCache } from '../../../src/estimation/models/discretization-cache.js';
import { ModelConfigError } from '../../../src/estimation/model-config-error.js';

describe('DiscretizationCache', () => {
  it('returns the stored value on a hit and undefined on a miss', () => {
    const c = new DiscretizationCache<string>(4);
    c.set(0.1, 'a');
    expect(c.get(0.1)).toBe('a');
    expect(c.get(0.2)).toBeUndefined();
  });

  it('never holds more entries than its capacity', () => {
    const c = new DiscretizationCache<number>(8);
    for (let i = 0; i < 100; i++) c.set(i * 0.01, i);
    expect(c.size).toBe(8);
  });

  it('evicts the least recently used entry, counting reads as use', () => {
    const c = new DiscretizationCache<string>(2);
    c.set(1, 'one');
    c.set(2, 'two');
    c.get(1); // 2 is now the least recently used
    c.set(3, 'three');
    expect(c.get(2)).toBeUndefined();
    expect(c.get(1)).toBe('one');
    expect(c.get(3)).toBe('three');
  });

  it('replaces the value of an existing key without evicting another', () => {
    const c = new DiscretizationCache<string>(2);
    c.set(1, 'one');
    c.set(2, 'two');
    c.set(1, 'uno');
    expect(c.get(1)).toBe('uno');
    expect(c.get(2)).toBe('two');
  });

  it('rejects a capacity below one as a config error', () => {
    expect(() => new DiscretizationCache(0)).toThrow(ModelConfigError);
    expect(() => new DiscretizationCache(0)).toThrow('cacheEntries must be an integer ≥ 1, got 0');
  });
});
