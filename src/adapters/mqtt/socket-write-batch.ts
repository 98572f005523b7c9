/**
 * Gathers the connection's socket writes into one system call per short interval. At a few
 * thousand messages a second, every estimate used to cost its own `writev` to the kernel (mqtt.js
 * writes each packet as it goes and handles each incoming packet in its own tick): the largest
 * single item of the daemon's CPU profile.
 *
 * Two kinds of writes share one batch, in order. QoS 0 estimates are encoded here
 * (publish-packet.ts) into a scratch buffer and leave as one Buffer. Anything mqtt.js writes
 * itself (QoS 1 publishes, acknowledgements) first sends what is encoded, then finds the socket
 * corked. `delayMs` after the batch opened, or as soon as `maxBytes` wait, the encoded bytes are
 * written and the socket uncorked. The price is at most `delayMs` of added latency.
 *
 * Corking changes when bytes reach the kernel, not what mqtt.js believes it sent: QoS 1
 * bookkeeping, PUBACK handling and `drain` backpressure are untouched.
 */
import { publishPacketSize, writePublishPacket } from './publish-packet.js';

/** The part of a socket the batch needs. */
export interface CorkableStream {
  cork(): void;
  uncork(): void;
  write(chunk: Buffer): boolean;
  readonly writableLength: number;
  readonly destroyed?: boolean;
}

/** Options of {@link createSocketWriteBatch}. */
export interface SocketWriteBatchOptions {
  /** Longest a write waits in the batch, in ms (at least 1). */
  readonly delayMs: number;
  /** Waiting bytes that flush the batch at once. */
  readonly maxBytes: number;
  /** MQTT protocol version of the connection (4 = 3.1.1, 5), for the packets encoded here. */
  readonly protocolVersion: number;
}

/** One batch at a time, on whichever stream is current. */
export interface SocketWriteBatch {
  /**
   * Adds a QoS 0 PUBLISH to the batch on `stream`. Returns false (and adds nothing) when the
   * packet cannot be framed; the caller then leaves it to the client library.
   */
  publishQos0(stream: CorkableStream, topic: string, payload: string | Buffer, retain: boolean): boolean;
  /** Call before the client library writes to `stream`: keeps the order and corks the socket. */
  open(stream: CorkableStream): void;
  /** Call after the client library wrote: flushes early once `maxBytes` are waiting. */
  written(): void;
  /** Sends what is batched now (before a disconnect, on stop). */
  flush(): void;
  /** Flushes and cancels the timer. */
  close(): void;
}

/** Creates a {@link SocketWriteBatch}. */
export function createSocketWriteBatch(options: SocketWriteBatchOptions): SocketWriteBatch {
  const delayMs = Math.max(1, options.delayMs);
  const { maxBytes, protocolVersion } = options;
  // Reused between batches: each flush copies out exactly what it holds, because the socket may
  // keep a written chunk until the kernel has taken all of it.
  let scratch = Buffer.allocUnsafe(Math.max(4096, maxBytes));
  let used = 0;
  let target: CorkableStream | null = null;
  let corked: CorkableStream | null = null;
  let timer: NodeJS.Timeout | null = null;
  let armed = false;

  const writeEncoded = (): void => {
    const s = target;
    if (s === null || used === 0) return;
    const chunk = Buffer.allocUnsafe(used);
    scratch.copy(chunk, 0, 0, used);
    used = 0;
    if (s.destroyed !== true) s.write(chunk);
  };
  const flush = (): void => {
    writeEncoded();
    target = null;
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
  const switchTo = (stream: CorkableStream): void => {
    if ((target !== null && target !== stream) || (corked !== null && corked !== stream)) flush();
    target = stream;
    arm();
  };

  return {
    publishQos0(stream, topic, payload, retain) {
      const topicBytes = Buffer.byteLength(topic);
      const payloadBytes = typeof payload === 'string' ? Buffer.byteLength(payload) : payload.length;
      const size = publishPacketSize(topicBytes, payloadBytes, protocolVersion);
      if (size < 0) return false;
      switchTo(stream);
      if (used + size > scratch.length) {
        writeEncoded();
        if (size > scratch.length) scratch = Buffer.allocUnsafe(size);
      }
      used = writePublishPacket(scratch, used, topic, topicBytes, payload, payloadBytes, retain, protocolVersion);
      if (used + (corked?.writableLength ?? 0) >= maxBytes) flush();
      return true;
    },
    open(stream) {
      switchTo(stream);
      if (corked !== stream && stream.destroyed !== true) {
        stream.cork();
        corked = stream;
      }
      // Behind the cork, so the packets encoded so far and the client's next one leave together, in order.
      writeEncoded();
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
