/**
 * A bounded least-recently-used cache of discretized steps keyed by a number (the dt value, or a
 * step count). Mixed-rate data repeats a handful of step lengths, so a small cache turns the
 * setup-time matrix exponential into a copy. A hit only bumps a counter: it allocates nothing.
 */
import { ModelConfigError } from '../model-config-error.js';

interface Entry<T> {
  readonly value: T;
  lastUse: number;
}

/** Default capacity: enough distinct dt values for several sensor rates and their gaps. */
export const DEFAULT_CACHE_ENTRIES = 64;

/** LRU cache from a numeric key to a value; evicts the least recently used entry when full. */
export class DiscretizationCache<T> {
  private readonly entries = new Map<number, Entry<T>>();
  private clock = 0;

  /** capacity: an integer ≥ 1 (default 64); anything else is a ModelConfigError at `cacheEntries`. */
  constructor(readonly capacity: number = DEFAULT_CACHE_ENTRIES) {
    if (!Number.isInteger(capacity) || capacity < 1) {
      throw new ModelConfigError('cacheEntries', `cacheEntries must be an integer ≥ 1, got ${String(capacity)}`);
    }
  }

  /** Number of entries held. */
  get size(): number {
    return this.entries.size;
  }

  /** The value for key, marking it most recently used; undefined on a miss. */
  get(key: number): T | undefined {
    const e = this.entries.get(key);
    if (e === undefined) return undefined;
    e.lastUse = ++this.clock;
    return e.value;
  }

  /** Stores value under key, evicting the least recently used entry if the cache is full. */
  set(key: number, value: T): void {
    if (!this.entries.has(key) && this.entries.size >= this.capacity) this.evictOldest();
    this.entries.set(key, { value, lastUse: ++this.clock });
  }

  private evictOldest(): void {
    // A linear scan on a miss (≤ capacity entries) keeps the hit path free of list bookkeeping.
    let oldestKey: number | undefined;
    let oldest = Infinity;
    for (const [k, e] of this.entries) {
      if (e.lastUse < oldest) {
        oldest = e.lastUse;
        oldestKey = k;
      }
    }
    if (oldestKey !== undefined) this.entries.delete(oldestKey);
  }
}
