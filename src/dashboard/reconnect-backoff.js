/**
 * Delays between reconnection attempts: doubling from `firstMs` up to `maxMs`, each drawn
 * from the upper half of its step so many pages reconnecting after a daemon restart do not
 * arrive all at once.
 */
export class ReconnectBackoff {
  /**
   * @param {{ firstMs?: number, maxMs?: number, random?: () => number }} [options]
   *   defaults: 500 ms, 15000 ms, Math.random
   */
  constructor(options = {}) {
    this.firstMs = options.firstMs ?? 500;
    this.maxMs = options.maxMs ?? 15_000;
    this.random = options.random ?? Math.random;
    this.attempt = 0;
  }

  /** The delay before the next attempt, in ms; each call counts one attempt. */
  nextDelayMs() {
    const stepMs = Math.min(this.maxMs, this.firstMs * 2 ** this.attempt);
    this.attempt += 1;
    return Math.round(stepMs * (0.5 + 0.5 * this.random()));
  }

  /** Starts over from `firstMs` (after a connection that worked). */
  reset() {
    this.attempt = 0;
  }
}
