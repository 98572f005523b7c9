import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { createSocketWriteBatch, type CorkableStream } from '../../../src/adapters/mqtt/socket-write-batch.js';

/** A stream that records cork depth and how many uncorks reached depth zero (a real flush). */
function fakeStream(): CorkableStream & { depth: number; flushes: number; writableLength: number; destroyed: boolean } {
  return {
    depth: 0,
    flushes: 0,
    writableLength: 0,
    destroyed: false,
    cork() {
      this.depth += 1;
    },
    uncork() {
      this.depth -= 1;
      if (this.depth === 0) {
        this.flushes += 1;
        this.writableLength = 0;
      }
    },
  };
}

beforeEach(() => {
  vi.useFakeTimers();
});
afterEach(() => {
  vi.useRealTimers();
});

describe('socket write batch', () => {
  it('holds writes from several turns and sends them together after the delay', () => {
    const batch = createSocketWriteBatch({ delayMs: 2, maxBytes: 1 << 20 });
    const s = fakeStream();
    for (let i = 0; i < 5; i += 1) {
      batch.open(s);
      batch.written();
      vi.advanceTimersByTime(0.3);
    }
    expect(s.depth).toBe(1);
    expect(s.flushes).toBe(0);
    vi.advanceTimersByTime(2);
    expect(s.depth).toBe(0);
    expect(s.flushes).toBe(1);
  });

  it('flushes at once when the buffered bytes reach the bound', () => {
    const batch = createSocketWriteBatch({ delayMs: 5, maxBytes: 1000 });
    const s = fakeStream();
    batch.open(s);
    s.writableLength = 600;
    batch.written();
    expect(s.flushes).toBe(0);
    batch.open(s);
    s.writableLength = 1200;
    batch.written();
    expect(s.flushes).toBe(1);
    expect(s.depth).toBe(0);
  });

  it('starts a new batch after a flush and closes it within the delay', () => {
    const batch = createSocketWriteBatch({ delayMs: 1, maxBytes: 1 << 20 });
    const s = fakeStream();
    for (let round = 1; round <= 3; round += 1) {
      batch.open(s);
      expect(s.depth).toBe(1);
      vi.advanceTimersByTime(1);
      expect(s.depth).toBe(0);
      expect(s.flushes).toBe(round);
    }
  });

  it('sends the old stream\'s batch when writes move to a new stream', () => {
    const batch = createSocketWriteBatch({ delayMs: 5, maxBytes: 1 << 20 });
    const old = fakeStream();
    const next = fakeStream();
    batch.open(old);
    batch.open(next);
    expect(old.depth).toBe(0);
    expect(old.flushes).toBe(1);
    expect(next.depth).toBe(1);
  });

  it('never corks a destroyed stream', () => {
    const batch = createSocketWriteBatch({ delayMs: 1, maxBytes: 1 << 20 });
    const s = fakeStream();
    s.destroyed = true;
    batch.open(s);
    expect(s.depth).toBe(0);
  });

  it('flushes on close and leaves no timer behind', () => {
    const batch = createSocketWriteBatch({ delayMs: 50, maxBytes: 1 << 20 });
    const s = fakeStream();
    batch.open(s);
    batch.close();
    expect(s.depth).toBe(0);
    expect(vi.getTimerCount()).toBe(0);
  });
});
