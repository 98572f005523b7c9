/**
 * A bounded queue in front of the MQTT client's publish. mqtt.js buffers without limit while
 * offline and adds one socket `drain` listener per publish while the socket is full (it warns
 * past about a thousand), so the daemon keeps its own bounds: at most `maxInFlight` publishes
 * handed to the client and not yet completed, at most `maxQueued` waiting behind them. When the
 * queue is full the oldest waiting message is dropped and counted: for estimates the newest
 * value is the one worth sending.
 */

/** One message to publish. */
export interface OutgoingMessage {
  readonly topic: string;
  readonly payload: string | Buffer;
  readonly qos: 0 | 1 | 2;
  readonly retain: boolean;
}

/** How the queue reaches the client. */
export interface OutgoingQueueOptions {
  /** Messages waiting while offline or while `maxInFlight` are outstanding (at least 1). */
  readonly maxQueued: number;
  /** Publishes handed to the client whose completion callback has not run yet. */
  readonly maxInFlight: number;
  /** True while handing messages to the client makes sense (connected, not stopping). */
  readonly canSend: () => boolean;
  /** Hands one message to the client; `done` runs once it is written (QoS 0) or acknowledged. */
  readonly send: (message: OutgoingMessage, done: () => void) => void;
}

/** The queue's surface. */
export interface OutgoingQueue {
  /** Queues a message and sends what the bounds allow. Never throws. */
  push(message: OutgoingMessage): void;
  /** Sends queued messages while allowed; call it when sending becomes possible again. */
  pump(): void;
  /** Resolves once nothing is queued or in flight. */
  whenIdle(): Promise<void>;
  /** Drops every queued message (counted) and returns how many were dropped. */
  clear(): number;
  readonly queuedCount: number;
  readonly inFlightCount: number;
  /** Messages dropped so far because the queue was full or cleared. */
  readonly droppedCount: number;
}

/** Creates an {@link OutgoingQueue}. */
export function createOutgoingQueue(options: OutgoingQueueOptions): OutgoingQueue {
  // Taken from `head` on; slots before it are cleared so sent messages can be collected.
  const waiting: Array<OutgoingMessage | undefined> = [];
  const maxQueued = Math.max(1, options.maxQueued);
  let head = 0;
  let inFlight = 0;
  let dropped = 0;
  let pumping = false;
  let idleWaiters: Array<() => void> = [];

  const queued = (): number => waiting.length - head;
  const notifyIfIdle = (): void => {
    if (queued() > 0 || inFlight > 0 || idleWaiters.length === 0) return;
    const waiters = idleWaiters;
    idleWaiters = [];
    for (const resolve of waiters) resolve();
  };
  const compact = (): void => {
    // Shift by index and compact now and then, so a long queue is not re-copied per message.
    if (head > 1024 && head * 2 > waiting.length) {
      waiting.splice(0, head);
      head = 0;
    }
  };
  const complete = (): void => {
    inFlight -= 1;
    pump();
    notifyIfIdle();
  };
  function pump(): void {
    // A QoS 0 callback can run synchronously inside send(); the flag turns that re-entry into
    // another turn of this loop instead of a recursion as deep as the queue.
    if (pumping) return;
    pumping = true;
    try {
      while (queued() > 0 && inFlight < options.maxInFlight && options.canSend()) {
        const message = waiting[head] as OutgoingMessage;
        waiting[head] = undefined;
        head += 1;
        inFlight += 1;
        let completed = false;
        options.send(message, () => {
          if (completed) return;
          completed = true;
          complete();
        });
      }
    } finally {
      pumping = false;
      compact();
    }
  }

  return {
    push(message) {
      if (queued() >= maxQueued) {
        waiting[head] = undefined;
        head += 1;
        dropped += 1;
      }
      waiting.push(message);
      pump();
    },
    pump,
    whenIdle() {
      return new Promise((resolve) => {
        idleWaiters.push(resolve);
        notifyIfIdle();
      });
    },
    clear() {
      const n = queued();
      waiting.length = 0;
      head = 0;
      dropped += n;
      notifyIfIdle();
      return n;
    },
    get queuedCount() {
      return queued();
    },
    get inFlightCount() {
      return inFlight;
    },
    get droppedCount() {
      return dropped;
    },
  };
}
