import { describe, expect, it } from 'vitest';
import { reconnectDelayMs } from '../../../src/adapters/mqtt/reconnect-backoff.js';

const noJitter = (): number => 0;
const fullJitter = (): number => 0.999999;

describe('reconnectDelayMs', () => {
  it('starts at the floor for the first attempt', () => {
    expect(reconnectDelayMs(0, 500, 30000, noJitter)).toBe(500);
  });

  it('doubles per attempt without jitter', () => {
    expect([1, 2, 3].map((a) => reconnectDelayMs(a, 500, 30000, noJitter))).toEqual([1000, 2000, 4000]);
  });

  it('stops growing at the ceiling', () => {
    expect(reconnectDelayMs(20, 500, 30000, noJitter)).toBe(30000);
    expect(reconnectDelayMs(5000, 500, 30000, noJitter)).toBe(30000);
  });

  it('takes at most a quarter off with jitter and never goes below the floor', () => {
    expect(reconnectDelayMs(3, 500, 30000, fullJitter)).toBe(3000);
    expect(reconnectDelayMs(0, 500, 30000, fullJitter)).toBe(500);
  });

  it('grows strictly from attempt to attempt below the ceiling whatever the jitter', () => {
    const delays = [0, 1, 2, 3, 4].map((a) => reconnectDelayMs(a, 20, 400, a % 2 === 0 ? fullJitter : noJitter));
    for (let i = 1; i < delays.length; i += 1) expect(delays[i]).toBeGreaterThan(delays[i - 1] as number);
  });
});
