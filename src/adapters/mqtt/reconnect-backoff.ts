/**
 * Delay before a reconnect attempt: exponential backoff between a floor and a ceiling, with a
 * little jitter so many daemons that lost the same broker do not all knock at the same instant.
 */

/**
 * The delay in milliseconds before reconnect attempt `attempt` (0 for the first attempt after
 * a loss). The base doubles from `minMs` per attempt up to `maxMs`; jitter takes up to a quarter
 * off the base, never going below `minMs`. `random` returns a number in [0, 1).
 */
export function reconnectDelayMs(attempt: number, minMs: number, maxMs: number, random: () => number = Math.random): number {
  // Cap the exponent first: 2 ** 1100 is Infinity, and Infinity * 0 would be NaN for minMs 0.
  const baseMs = Math.min(maxMs, minMs * 2 ** Math.min(attempt, 52));
  const jitteredMs = baseMs * (1 - 0.25 * random());
  return Math.max(minMs, Math.round(jitteredMs));
}
