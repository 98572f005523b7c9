import { describe, expect, it } from 'vitest';
import { ReconnectBackoff } from '../../src/dashboard/reconnect-backoff.js';

describe('ReconnectBackoff', () => {
  it('doubles the delay from firstMs up to maxMs', () => {
    const b = new ReconnectBackoff({ firstMs: 500, maxMs: 3000, random: () => 1 });
    expect(Array.from({ length: 5 }, () => b.nextDelayMs())).toEqual([500, 1000, 2000, 3000, 3000]);
  });

  it('draws each delay from the upper half of its step', () => {
    const b = new ReconnectBackoff({ firstMs: 1000, maxMs: 8000, random: () => 0 });
    expect([b.nextDelayMs(), b.nextDelayMs()]).toEqual([500, 1000]);
  });

  it('starts over from firstMs after reset', () => {
    const b = new ReconnectBackoff({ firstMs: 500, maxMs: 15_000, random: () => 1 });
    b.nextDelayMs();
    b.nextDelayMs();
    b.reset();
    expect(b.nextDelayMs()).toBe(500);
  });
});
