import { describe, expect, it } from 'vitest';
import { createOutgoingQueue, type OutgoingMessage } from '../../../src/adapters/mqtt/outgoing-queue.js';

const message = (seq: number): OutgoingMessage => ({ topic: 'vehicle-yard/tug-03/estimate', payload: String(seq), qos: 1, retain: false });

function harness(options: { maxQueued: number; maxInFlight: number; synchronousDone?: boolean }) {
  const sent: string[] = [];
  const pending: Array<() => void> = [];
  const state = { online: false };
  const queue = createOutgoingQueue({
    maxQueued: options.maxQueued,
    maxInFlight: options.maxInFlight,
    canSend: () => state.online,
    send: (m, done) => {
      sent.push(String(m.payload));
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
});
