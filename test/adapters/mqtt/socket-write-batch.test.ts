import mqttPacket from 'mqtt-packet';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { createSocketWriteBatch, type CorkableStream } from '../../../src/adapters/mqtt/socket-write-batch.js';

/**
 * A stream that behaves like a socket towards cork: writes made while corked wait, and each
 * uncork to depth zero, or each write while uncorked, is one delivery (one system call).
 */
function fakeStream() {
  const waiting: Buffer[] = [];
  const s = {
    depth: 0,
    deliveries: [] as Buffer[],
    destroyed: false,
    get writableLength() {
      return waiting.reduce((n, b) => n + b.length, 0);
    },
    cork() {
      s.depth += 1;
    },
    uncork() {
      s.depth -= 1;
      if (s.depth === 0 && waiting.length > 0) s.deliveries.push(Buffer.concat(waiting.splice(0)));
    },
    write(chunk: Buffer) {
      if (s.depth > 0) waiting.push(Buffer.from(chunk));
      else s.deliveries.push(Buffer.from(chunk));
      return true;
    },
    /** Every delivered byte, in order. */
    bytes: () => Buffer.concat(s.deliveries),
  };
  return s satisfies CorkableStream;
}

/** Topics and payloads of the PUBLISH packets in `bytes` (parsed by mqtt-packet, the reference). */
function publishes(bytes: Buffer): string[] {
  const parser = mqttPacket.parser({ protocolVersion: 5 });
  const out: string[] = [];
  parser.on('packet', (p: mqttPacket.Packet) => {
    const pub = p as mqttPacket.IPublishPacket;
    out.push(`${pub.topic} ${pub.payload.toString()}`);
  });
  parser.parse(bytes);
  return out;
}

const options = (delayMs: number, maxBytes = 1 << 20) => ({ delayMs, maxBytes, protocolVersion: 5 });

beforeEach(() => {
  vi.useFakeTimers();
});
afterEach(() => {
  vi.useRealTimers();
});

describe('socket write batch', () => {
  it('sends QoS 0 packets added over several turns in one write after the delay, in order', () => {
    const batch = createSocketWriteBatch(options(2));
    const s = fakeStream();
    for (let i = 0; i < 5; i += 1) {
      expect(batch.publishQos0(s, `yard/tug-0${i}/estimate`, `{"seq":${i}}`, false)).toBe(true);
      vi.advanceTimersByTime(0.3);
    }
    expect(s.deliveries).toHaveLength(0);
    vi.advanceTimersByTime(2);
    expect(s.deliveries).toHaveLength(1);
    expect(publishes(s.bytes())).toEqual([0, 1, 2, 3, 4].map((i) => `yard/tug-0${i}/estimate {"seq":${i}}`));
  });

  it('keeps the order of its own packets and the client library\'s writes, in one delivery', () => {
    const batch = createSocketWriteBatch(options(2));
    const s = fakeStream();
    batch.publishQos0(s, 'yard/a/estimate', '1', false);
    batch.open(s);
    s.write(mqttPacket.generate({ cmd: 'publish', topic: 'yard/b/estimate', payload: '2', qos: 1, messageId: 7, retain: false, dup: false }, { protocolVersion: 5 }));
    batch.written();
    batch.publishQos0(s, 'yard/c/estimate', '3', false);
    vi.advanceTimersByTime(2);
    expect(s.deliveries).toHaveLength(1);
    expect(publishes(s.bytes())).toEqual(['yard/a/estimate 1', 'yard/b/estimate 2', 'yard/c/estimate 3']);
    expect(s.depth).toBe(0);
  });

  it('flushes at once when the waiting bytes reach the bound', () => {
    const batch = createSocketWriteBatch(options(50, 1000));
    const s = fakeStream();
    const payload = 'x'.repeat(300);
    for (let i = 0; i < 3; i += 1) batch.publishQos0(s, 'yard/a/estimate', payload, false);
    expect(s.deliveries).toHaveLength(0);
    batch.publishQos0(s, 'yard/a/estimate', payload, false);
    expect(s.deliveries).toHaveLength(1);
    expect(publishes(s.bytes())).toHaveLength(4);
  });

  it('flushes at once when the client library\'s corked writes reach the bound', () => {
    const batch = createSocketWriteBatch(options(50, 1000));
    const s = fakeStream();
    batch.open(s);
    s.write(Buffer.alloc(600));
    batch.written();
    expect(s.deliveries).toHaveLength(0);
    batch.open(s);
    s.write(Buffer.alloc(600));
    batch.written();
    expect(s.deliveries).toHaveLength(1);
    expect(s.depth).toBe(0);
  });

  it('takes a packet larger than its scratch buffer', () => {
    const batch = createSocketWriteBatch(options(1, 4096));
    const s = fakeStream();
    batch.publishQos0(s, 'yard/a/estimate', 'small', false);
    batch.publishQos0(s, 'yard/a/estimate', 'y'.repeat(10_000), false);
    vi.advanceTimersByTime(1);
    expect(publishes(s.bytes()).map((p) => p.length)).toEqual(['yard/a/estimate small'.length, 'yard/a/estimate '.length + 10_000]);
  });

  it('starts a new batch after a flush and closes it within the delay', () => {
    const batch = createSocketWriteBatch(options(1));
    const s = fakeStream();
    for (let round = 1; round <= 3; round += 1) {
      batch.publishQos0(s, 'yard/a/estimate', String(round), false);
      expect(s.deliveries).toHaveLength(round - 1);
      vi.advanceTimersByTime(1);
      expect(s.deliveries).toHaveLength(round);
    }
  });

  it('sends the old stream\'s batch when writes move to a new stream', () => {
    const batch = createSocketWriteBatch(options(5));
    const old = fakeStream();
    const next = fakeStream();
    batch.open(old);
    batch.publishQos0(old, 'yard/a/estimate', 'old', false);
    batch.publishQos0(next, 'yard/a/estimate', 'new', false);
    expect(old.depth).toBe(0);
    expect(publishes(old.bytes())).toEqual(['yard/a/estimate old']);
    expect(next.deliveries).toHaveLength(0);
    vi.advanceTimersByTime(5);
    expect(publishes(next.bytes())).toEqual(['yard/a/estimate new']);
  });

  it('writes nothing to a destroyed stream', () => {
    const batch = createSocketWriteBatch(options(1));
    const s = fakeStream();
    batch.publishQos0(s, 'yard/a/estimate', '1', false);
    s.destroyed = true;
    batch.open(s);
    vi.advanceTimersByTime(1);
    expect(s.depth).toBe(0);
    expect(s.deliveries).toHaveLength(0);
  });

  it('flushes on close and leaves no timer behind', () => {
    const batch = createSocketWriteBatch(options(50));
    const s = fakeStream();
    batch.publishQos0(s, 'yard/a/estimate', '1', false);
    batch.open(s);
    batch.close();
    expect(s.depth).toBe(0);
    expect(s.deliveries).toHaveLength(1);
    expect(vi.getTimerCount()).toBe(0);
  });
});
