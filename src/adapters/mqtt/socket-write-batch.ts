/**
 * Gathers the client's socket writes into one system call per short interval. mqtt.js writes
 * each packet as it goes, and it handles each incoming packet in its own tick, so at a few
 * thousand messages a second every estimate cost one `writev` to the kernel: the largest single
 * item of the daemon's CPU profile. Corking the socket at the first write and uncorking it
 * `delayMs` later (or as soon as `maxBytes` are buffered) sends a burst of estimates in one
 * write at the price of at most `delayMs` of added latency.
 *
 * Corking changes when bytes reach the kernel, not what mqtt.js believes it sent: QoS 1
 * bookkeeping, PUBACK handling and `drain` backpressure are untouched.
 */

/** The part of a socket the batch needs. */
export interface CorkableStream {
  cork(): void;
  uncork(): void;
  readonly writableLength: number;
  readonly destroyed?: boolean;
}

/** Options of {@link createSocketWriteBatch}. */
export interface SocketWriteBatchOptions {
  /** Longest a write waits in the batch, in ms (at least 1). */
  readonly delayMs: number;
  /** Buffered bytes that flush the batch at once. */
  readonly maxBytes: number;
}

/** One batch at a time, on whichever stream is current. */
export interface SocketWriteBatch {
  /** Call before writing to `stream`: starts a batch there when none is open. */
  open(stream: CorkableStream): void;
  /** Call after writing: flushes early once `maxBytes` are waiting. */
  written(): void;
  /** Sends what is batched now (before a disconnect, on stop). */
  flush(): void;
  /** Cancels the timer; the batch is flushed first. */
  close(): void;
}

/** Creates a {@link SocketWriteBatch}. */
export function createSocketWriteBatch(options: SocketWriteBatchOptions): SocketWriteBatch {
  const delayMs = Math.max(1, options.delayMs);
  const { maxBytes } = options;
  let corked: CorkableStream | null = null;
  let timer: NodeJS.Timeout | null = null;
  let armed = false;

  const flush = (): void => {
    const s = corked;
    if (s === null) return;
    corked = null;
    s.uncork();
  };
  const onTimer = (): void => {
    armed = false;
    flush();
  };
  // One timer, re-armed per batch, so a batch costs no timer allocation. An early flush leaves
  // it armed: it then fires on nothing, or closes the next batch a little sooner.
  const arm = (): void => {
    if (armed) return;
    armed = true;
    if (timer === null) {
      timer = setTimeout(onTimer, delayMs);
      timer.unref();
    } else {
      timer.refresh();
    }
  };

  return {
    open(stream) {
      if (corked === stream) return;
      if (corked !== null) flush();
      if (stream.destroyed === true) return;
      stream.cork();
      corked = stream;
      arm();
    },
    written() {
      if (corked !== null && corked.writableLength >= maxBytes) flush();
    },
    flush,
    close() {
      flush();
      if (timer !== null) clearTimeout(timer);
      timer = null;
      armed = false;
    },
  };
}
