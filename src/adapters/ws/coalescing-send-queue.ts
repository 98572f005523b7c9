/**
 * The bounded queue of frames waiting for one slow WebSocket client.
 *
 * Two kinds of entry share one insertion order:
 * - keyed entries (`pushLatest`): a newer frame with the same key replaces the queued one in
 *   place, so a stalled client receives only the latest estimate per (estimator, entity, kind)
 *   and an entity keeps its place in line instead of moving to the back on every update;
 * - ordered entries (`pushInOrder`): health changes, acknowledgements and errors, each kept.
 *
 * The queue never holds more than `maxEntries` entries: when full, the oldest entry goes and is
 * counted as dropped. Memory per client is therefore bounded however long the client stalls.
 */

/** What happened to a pushed frame. */
export type PushOutcome = 'queued' | 'coalesced' | 'dropped-oldest';

/** Thrown for a queue built with a bound that is not a positive integer (a programmer error). */
export class QueueBoundError extends RangeError {
  override name = 'QueueBoundError';
}

/** Bounded, coalescing queue of text frames for one client (see the file comment). */
export class CoalescingSendQueue {
  /** Keyed entries live under `k<key>`, ordered ones under `o<sequence>`, so they never collide. */
  private readonly entries = new Map<string, string>();
  private sequence = 0;
  private droppedCount = 0;
  private coalescedCount = 0;

  /** @param maxEntries Most entries held at once (positive integer). */
  constructor(readonly maxEntries: number) {
    if (!Number.isInteger(maxEntries) || maxEntries < 1) {
      throw new QueueBoundError(`maxEntries must be a positive integer, got ${String(maxEntries)}`);
    }
  }

  /** Entries waiting. */
  get size(): number {
    return this.entries.size;
  }

  /** Entries removed unsent because the queue was full (monotonic). */
  get dropped(): number {
    return this.droppedCount;
  }

  /** Entries replaced by a newer frame with the same key, or superseded (monotonic). */
  get coalesced(): number {
    return this.coalescedCount;
  }

  /** Queues `frame` under `key`; a queued frame with the same key is replaced where it stands. */
  pushLatest(key: string, frame: string): PushOutcome {
    const slot = `k${key}`;
    if (this.entries.has(slot)) {
      this.entries.set(slot, frame);
      this.coalescedCount++;
      return 'coalesced';
    }
    return this.append(slot, frame);
  }

  /** Queues `frame` after everything already queued; it is never replaced, only dropped when old. */
  pushInOrder(frame: string): PushOutcome {
    return this.append(`o${this.sequence++}`, frame);
  }

  /** The oldest frame, removed from the queue; undefined when empty. */
  shift(): string | undefined {
    const first = this.entries.entries().next();
    if (first.done === true) return undefined;
    const [slot, frame] = first.value;
    this.entries.delete(slot);
    return frame;
  }

  /**
   * Removes every keyed entry, counting each as coalesced: used when a fresh snapshot makes the
   * queued estimates redundant. Ordered entries stay. Returns how many were removed.
   */
  supersedeKeyed(): number {
    let removed = 0;
    for (const slot of this.entries.keys()) {
      if (slot.charCodeAt(0) === 107 /* 'k' */) {
        this.entries.delete(slot);
        removed++;
      }
    }
    this.coalescedCount += removed;
    return removed;
  }

  /** Forgets every entry without counting it (the client has gone). */
  clear(): void {
    this.entries.clear();
  }

  private append(slot: string, frame: string): PushOutcome {
    let outcome: PushOutcome = 'queued';
    if (this.entries.size >= this.maxEntries) {
      const oldest = this.entries.keys().next();
      if (oldest.done !== true) this.entries.delete(oldest.value);
      this.droppedCount++;
      outcome = 'dropped-oldest';
    }
    this.entries.set(slot, frame);
    return outcome;
  }
}
