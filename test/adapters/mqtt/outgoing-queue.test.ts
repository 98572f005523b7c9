import { describe, expect, it } from 'vitest';
import { createOutgoingQueue, type OutgoingMessage } from '../../../src/adapters/mqtt/outgoing-queue.js';

const TOPIC = 'vehicle-yard/tug-03/estimate';
const message = (seq: number, qos: 0 | 1 = 1): OutgoingMessage => ({ topic: TOPIC, payload: String(seq), qos, retain: false });

function harness(options: { maxQueued: number; maxInFlight: number; maxQueuedBytes?: number; synchronousDone?: boolean }) {
  const sent: string[] = [];
  const pending: Array<() => void> = [];
  const state = { online: false };
  const queue = createOutgoingQueue({
    maxQueued: options.maxQueued,
    ...(options.maxQueuedBytes === undefined ? {} : { maxQueuedBytes: options.maxQueuedBytes }),
    maxInFlight: options.maxInFlight,
    canSend: () => state.online,
    send: (_topic, payload, _qos, _retain, done) => {
      sent.push(String(payload));
      if (done === null) return;
      if (options.synchronousDone === true) done();
      else pending.push(done);
    },
  });
  return { queue, sent, pending, state };
}

describe('outgoing queue', () => {
  it('holds messages while it cannot send and sends them in order once it can', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 10 });
    h.queue.push(message(1));
    h.queue.push(message(2));
    expect(h.sent).toEqual([]);
    h.state.online = true;
    h.queue.pump();
    expect(h.sent).toEqual(['1', '2']);
  });

  it('drops the oldest waiting message when full and counts it', () => {
    const h = harness({ maxQueued: 2, maxInFlight: 10 });
    for (let seq = 1; seq <= 4; seq += 1) h.queue.push(message(seq));
    expect(h.queue.droppedCount).toBe(2);
    h.state.online = true;
    h.queue.pump();
    expect(h.sent).toEqual(['3', '4']);
  });

  it('keeps no more than maxInFlight messages outstanding', () => {
    const h = harness({ maxQueued: 100, maxInFlight: 3 });
    h.state.online = true;
    for (let seq = 1; seq <= 5; seq += 1) h.queue.push(message(seq));
    expect(h.sent).toEqual(['1', '2', '3']);
    h.pending.shift()?.();
    expect(h.sent).toEqual(['1', '2', '3', '4']);
    expect(h.queue.inFlightCount).toBe(3);
  });

  it('sends a long backlog whose callbacks run synchronously without deep recursion', () => {
    const h = harness({ maxQueued: 200_000, maxInFlight: 1, synchronousDone: true });
    for (let seq = 0; seq < 100_000; seq += 1) h.queue.push(message(seq));
    h.state.online = true;
    h.queue.pump();
    expect(h.sent).toHaveLength(100_000);
    expect(h.queue.queuedCount).toBe(0);
  });

  it('resolves whenIdle once every message has completed', async () => {
    const h = harness({ maxQueued: 10, maxInFlight: 10 });
    h.state.online = true;
    h.queue.push(message(1));
    let idle = false;
    const waiting = h.queue.whenIdle().then(() => (idle = true));
    await Promise.resolve();
    expect(idle).toBe(false);
    h.pending.shift()?.();
    await waiting;
    expect(idle).toBe(true);
  });

  it('counts a callback that runs twice only once', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 1 });
    h.state.online = true;
    h.queue.push(message(1));
    h.queue.push(message(2));
    h.queue.push(message(3));
    const done = h.pending.shift();
    done?.();
    done?.();
    expect(h.sent).toEqual(['1', '2']);
  });

  it('counts cleared messages as dropped', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 10 });
    h.queue.push(message(1));
    h.queue.push(message(2));
    expect(h.queue.clear()).toBe(2);
    expect(h.queue.droppedCount).toBe(2);
  });

  it('drops the oldest waiting messages past its byte bound and counts them', () => {
    // Each message is the topic plus a 100-byte payload; the bound holds two of them.
    const size = TOPIC.length + 100;
    const h = harness({ maxQueued: 100, maxInFlight: 10, maxQueuedBytes: 2 * size });
    for (let seq = 1; seq <= 5; seq += 1) h.queue.push({ topic: TOPIC, payload: String(seq).padEnd(100, '.'), qos: 0, retain: false });
    expect(h.queue.queuedCount).toBe(2);
    expect(h.queue.queuedBytes).toBe(2 * size);
    expect(h.queue.droppedCount).toBe(3);
    h.state.online = true;
    h.queue.pump();
    expect(h.sent.map((p) => p.replace(/\.+$/, ''))).toEqual(['4', '5']);
    expect(h.queue.queuedBytes).toBe(0);
  });

  it('keeps the newest message even when it alone is larger than the byte bound', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 10, maxQueuedBytes: 10 });
    h.queue.push(message(1));
    h.queue.push({ topic: TOPIC, payload: 'x'.repeat(50), qos: 1, retain: false });
    expect(h.queue.queuedCount).toBe(1);
    expect(h.queue.droppedCount).toBe(1);
  });

  it('counts bytes of a multi-byte payload in UTF-8', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 10 });
    h.queue.push({ topic: 'a', payload: 'é', qos: 0, retain: false });
    expect(h.queue.queuedBytes).toBe(3);
  });

  it('sends QoS 0 messages without a completion callback or an in-flight slot', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 1 });
    h.state.online = true;
    for (let seq = 1; seq <= 4; seq += 1) h.queue.push(message(seq, 0));
    expect(h.sent).toEqual(['1', '2', '3', '4']);
    expect(h.pending).toHaveLength(0);
    expect(h.queue.inFlightCount).toBe(0);
  });

  it('holds QoS 0 messages behind a QoS 1 message waiting for a slot, keeping the order', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 1 });
    h.state.online = true;
    h.queue.push(message(1));
    h.queue.push(message(2));
    h.queue.push(message(3, 0));
    expect(h.sent).toEqual(['1']);
    h.pending.shift()?.();
    expect(h.sent).toEqual(['1', '2', '3']);
  });

  it('resumes after sending was refused once pump() is called again', () => {
    const h = harness({ maxQueued: 10, maxInFlight: 10 });
    h.state.online = true;
    h.queue.push(message(1, 0));
    h.state.online = false;
    h.queue.push(message(2, 0));
    expect(h.sent).toEqual(['1']);
    h.state.online = true;
    h.queue.pump();
    expect(h.sent).toEqual(['1', '2']);
  });
});
