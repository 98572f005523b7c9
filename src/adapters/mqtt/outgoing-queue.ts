/**
 * A bounded queue in front of the MQTT client's publish. mqtt.js buffers without limit while
 * offline and adds one socket `drain` listener per publish while the socket is full (it warns
 * past about a thousand), so the daemon keeps its own bounds: at most `maxInFlight`
 * acknowledged (QoS 1 and 2) publishes handed to the client and not yet completed, and at most
 * `maxQueued` messages and `maxQueuedBytes` bytes waiting. When a bound is passed the oldest
 * waiting message is dropped and counted: for estimates the newest value is the one worth
 * sending.
 *
 * QoS 0 has nothing to wait for once the client has it, so it takes no in-flight slot and no
 * completion callback; its backpressure is `canSend()` (the connection says no while the socket
 * wants a drain). When nothing waits and sending is possible, a message goes straight to the
 * client without being wrapped in a queue entry: the steady state allocates nothing here.
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
  /** Messages waiting while offline or flow-controlled (at least 1). */
  readonly maxQueued: number;
  /** Bytes (topic plus payload) waiting at most; default unbounded. */
  readonly maxQueuedBytes?: number;
  /** QoS 1/2 publishes handed to the client whose completion callback has not run yet. */
  readonly maxInFlight: number;
  /** True while handing messages to the client makes sense (connected, not stopping, socket not full). */
  readonly canSend: () => boolean;
  /**
   * Hands one message to the client. `done` is null for QoS 0; otherwise it runs once the
   * message is acknowledged (or given up by the client).
   */
  readonly send: (topic: string, payload: string | Buffer, qos: 0 | 1 | 2, retain: boolean, done: (() => void) | null) => void;
}

/** The queue's surface. */
export interface OutgoingQueue {
  /** Sends the message now when the bounds allow, else queues it. Never throws. */
  offer(topic: string, payload: string | Buffer, qos: 0 | 1 | 2, retain: boolean): void;
  /** The same as `offer` for a message already in one object. */
  push(message: OutgoingMessage): void;
  /** Sends queued messages while allowed; call it when sending becomes possible again. */
  pump(): void;
  /** Resolves once nothing is queued or in flight. */
  whenIdle(): Promise<void>;
  /** Drops every queued message (counted) and returns how many were dropped. */
  clear(): number;
  readonly queuedCount: number;
  /** Bytes (topic plus payload) of the queued messages. */
  readonly queuedBytes: number;
  readonly inFlightCount: number;
  /** Messages dropped so far because the queue was full or cleared. */
  readonly droppedCount: number;
}

interface Waiting extends OutgoingMessage {
  readonly bytes: number;
}

/** Creates an {@link OutgoingQueue}. */
export function createOutgoingQueue(options: OutgoingQueueOptions): OutgoingQueue {
  // Taken from `head` on; slots before it are cleared so sent messages can be collected.
  const waiting: Array<Waiting | undefined> = [];
  const maxQueued = Math.max(1, options.maxQueued);
  const maxQueuedBytes = options.maxQueuedBytes ?? Infinity;
  const { canSend, send, maxInFlight } = options;
  let head = 0;
  let bytes = 0;
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
  const take = (): Waiting => {
    const message = waiting[head] as Waiting;
    waiting[head] = undefined;
    head += 1;
    bytes -= message.bytes;
    return message;
  };
  const complete = (): void => {
    inFlight -= 1;
    pump();
    notifyIfIdle();
  };
  const dispatch = (topic: string, payload: string | Buffer, qos: 0 | 1 | 2, retain: boolean): void => {
    if (qos === 0) {
      send(topic, payload, 0, retain, null);
      return;
    }
    inFlight += 1;
    let completed = false;
    send(topic, payload, qos, retain, () => {
      if (completed) return;
      completed = true;
      complete();
    });
  };
  const sendable = (qos: 0 | 1 | 2): boolean => (qos === 0 || inFlight < maxInFlight) && canSend();

  function pump(): void {
    // A callback can run synchronously inside send(); the flag turns that re-entry into another
    // turn of this loop instead of a recursion as deep as the queue.
    if (pumping) return;
    pumping = true;
    try {
      // Strictly in order: a QoS 1 message waiting for a slot holds back the QoS 0 ones behind it.
      while (queued() > 0 && sendable((waiting[head] as Waiting).qos)) {
        const m = take();
        dispatch(m.topic, m.payload, m.qos, m.retain);
      }
    } finally {
      pumping = false;
      compact();
    }
  }

  const enqueue = (topic: string, payload: string | Buffer, qos: 0 | 1 | 2, retain: boolean): void => {
    const size = Buffer.byteLength(topic) + (typeof payload === 'string' ? Buffer.byteLength(payload) : payload.length);
    waiting.push({ topic, payload, qos, retain, bytes: size });
    bytes += size;
    // The newest message stays even when it alone exceeds the byte bound.
    while (queued() > 1 && (queued() > maxQueued || bytes > maxQueuedBytes)) {
      take();
      dropped += 1;
    }
    pump();
  };

  const queue: OutgoingQueue = {
    offer(topic, payload, qos, retain) {
      if (queued() === 0 && !pumping && sendable(qos)) dispatch(topic, payload, qos, retain);
      else enqueue(topic, payload, qos, retain);
    },
    push(message) {
      queue.offer(message.topic, message.payload, message.qos, message.retain);
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
      bytes = 0;
      dropped += n;
      notifyIfIdle();
      return n;
    },
    get queuedCount() {
      return queued();
    },
    get queuedBytes() {
      return bytes;
    },
    get inFlightCount() {
      return inFlight;
    },
    get droppedCount() {
      return dropped;
    },
  };
  return queue;
}
