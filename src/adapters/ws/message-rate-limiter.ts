/**
 * A token bucket for incoming client messages: up to `maxPerSecond` in a burst, refilled at
 * `maxPerSecond` per second. The clock is injected so tests decide what time it is.
 */
export class MessageRateLimiter {
  private tokens: number;
  private lastMs: number;

  /**
   * @param maxPerSecond Sustained rate and burst size (messages).
   * @param nowMs Monotonic clock in milliseconds.
   */
  constructor(private readonly maxPerSecond: number, private readonly nowMs: () => number) {
    this.tokens = maxPerSecond;
    this.lastMs = nowMs();
  }

  /** Takes one message's token; false when the client is over its rate. */
  tryTake(): boolean {
    const now = this.nowMs();
    // A clock that steps back must not mint or owe tokens.
    const elapsedMs = Math.max(0, now - this.lastMs);
    this.lastMs = now;
    this.tokens = Math.min(this.maxPerSecond, this.tokens + (elapsedMs * this.maxPerSecond) / 1000);
    if (this.tokens < 1) return false;
    this.tokens -= 1;
    return true;
  }
}
