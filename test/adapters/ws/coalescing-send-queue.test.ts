import { describe, expect, it } from 'vitest';
import { CoalescingSendQueue, QueueBoundError } from '../../../src/adapters/ws/coalescing-send-queue.js';

function drain(queue: CoalescingSendQueue): string[] {
  const out: string[] = [];
  for (let frame = queue.shift(); frame !== undefined; frame = queue.shift()) out.push(frame);
  return out;
}

describe('CoalescingSendQueue', () => {
  it('keeps the latest frame per key', () => {
    const queue = new CoalescingSendQueue(8);
    queue.pushLatest('tank-a', 'a1');
    queue.pushLatest('tank-a', 'a2');
    queue.pushLatest('tank-a', 'a3');
    expect(drain(queue)).toEqual(['a3']);
  });

  it('counts each replaced frame as coalesced', () => {
    const queue = new CoalescingSendQueue(8);
    expect(queue.pushLatest('tank-a', 'a1')).toBe('queued');
    expect(queue.pushLatest('tank-a', 'a2')).toBe('coalesced');
    queue.pushLatest('tank-b', 'b1');
    queue.pushLatest('tank-a', 'a3');
    expect(queue.coalesced).toBe(2);
    expect(queue.dropped).toBe(0);
  });

  it('leaves a replaced key where it first stood', () => {
    const queue = new CoalescingSendQueue(8);
    queue.pushLatest('tank-a', 'a1');
    queue.pushLatest('tank-b', 'b1');
    queue.pushLatest('tank-a', 'a2');
    expect(drain(queue)).toEqual(['a2', 'b1']);
  });

  it('keeps ordered frames in order between keyed ones', () => {
    const queue = new CoalescingSendQueue(8);
    queue.pushInOrder('h1');
    queue.pushLatest('tug-01', 'e1');
    queue.pushInOrder('h2');
    queue.pushInOrder('h2');
    queue.pushLatest('tug-01', 'e2');
    expect(drain(queue)).toEqual(['h1', 'e2', 'h2', 'h2']);
  });

  it('drops the oldest entry when full of distinct keys and counts it', () => {
    const queue = new CoalescingSendQueue(3);
    for (const entity of ['tug-01', 'tug-02', 'tug-03']) queue.pushLatest(entity, entity);
    expect(queue.pushLatest('tug-04', 'tug-04')).toBe('dropped-oldest');
    expect(queue.size).toBe(3);
    expect(queue.dropped).toBe(1);
    expect(drain(queue)).toEqual(['tug-02', 'tug-03', 'tug-04']);
  });

  it('bounds ordered frames too, dropping the oldest', () => {
    const queue = new CoalescingSendQueue(2);
    queue.pushInOrder('h1');
    queue.pushInOrder('h2');
    queue.pushInOrder('h3');
    expect(queue.dropped).toBe(1);
    expect(drain(queue)).toEqual(['h2', 'h3']);
  });

  it('never holds more than its bound under a mixed flood', () => {
    const queue = new CoalescingSendQueue(16);
    let largest = 0;
    for (let i = 0; i < 5000; i++) {
      if (i % 7 === 0) queue.pushInOrder(`h${i}`);
      else queue.pushLatest(`tug-${i % 40}`, `e${i}`);
      largest = Math.max(largest, queue.size);
    }
    expect(largest).toBe(16);
  });

  it('does not count a replacement of a full queue as a drop', () => {
    const queue = new CoalescingSendQueue(2);
    queue.pushLatest('tank-a', 'a1');
    queue.pushLatest('tank-b', 'b1');
    expect(queue.pushLatest('tank-b', 'b2')).toBe('coalesced');
    expect(queue.dropped).toBe(0);
  });

  it('supersedes keyed frames and keeps ordered ones', () => {
    const queue = new CoalescingSendQueue(8);
    queue.pushLatest('tank-a', 'a1');
    queue.pushInOrder('h1');
    queue.pushLatest('tank-b', 'b1');
    expect(queue.supersedeKeyed()).toBe(2);
    expect(queue.coalesced).toBe(2);
    expect(drain(queue)).toEqual(['h1']);
  });

  it('returns undefined when empty', () => {
    expect(new CoalescingSendQueue(1).shift()).toBeUndefined();
  });

  it('refuses a bound that is not a positive integer', () => {
    expect(() => new CoalescingSendQueue(0)).toThrow(QueueBoundError);
    expect(() => new CoalescingSendQueue(2.5)).toThrow(/positive integer/);
  });
});
