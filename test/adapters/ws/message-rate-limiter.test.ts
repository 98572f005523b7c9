import { describe, expect, it } from 'vitest';
import { MessageRateLimiter } from '../../../src/adapters/ws/message-rate-limiter.js';

function takeAll(limiter: MessageRateLimiter, n: number): number {
  let admitted = 0;
  for (let i = 0; i < n; i++) if (limiter.tryTake()) admitted++;
  return admitted;
}

describe('MessageRateLimiter', () => {
  it('admits a burst up to the rate and refuses the rest', () => {
    const limiter = new MessageRateLimiter(50, () => 0);
    expect(takeAll(limiter, 80)).toBe(50);
  });

  it('refills at the rate as time passes', () => {
    let nowMs = 0;
    const limiter = new MessageRateLimiter(50, () => nowMs);
    takeAll(limiter, 50);
    nowMs = 200;
    expect(takeAll(limiter, 50)).toBe(10);
  });

  it('never holds more than one second of tokens', () => {
    let nowMs = 0;
    const limiter = new MessageRateLimiter(10, () => nowMs);
    nowMs = 60_000;
    expect(takeAll(limiter, 100)).toBe(10);
  });

  it('mints nothing when the clock steps back', () => {
    let nowMs = 5000;
    const limiter = new MessageRateLimiter(10, () => nowMs);
    takeAll(limiter, 10);
    nowMs = 0;
    expect(limiter.tryTake()).toBe(false);
  });
});
