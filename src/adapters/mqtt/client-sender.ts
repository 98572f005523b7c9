/**
 * The connection's way out: the bounded outgoing queue (outgoing-queue.ts) feeding the current
 * mqtt.js client through the socket write batch (socket-write-batch.ts). QoS 0 messages are
 * framed into the batch directly; QoS 1 and 2 go through mqtt.js, which keeps their packet ids,
 * store and acknowledgements. Backpressure is the socket's: while it wants a drain, messages
 * wait in the bounded queue rather than in mqtt.js's unbounded one.
 */
import type { MqttClient } from 'mqtt';
import type { ResolvedBrokerConfig } from './mqtt-client-options.js';
import type { MqttConnectionOptions } from './mqtt-connection-options.js';
import { createOutgoingQueue, type OutgoingQueue } from './outgoing-queue.js';
import { publishOptionsFor } from './publish-options.js';
import { createSocketWriteBatch, type CorkableStream, type SocketWriteBatch } from './socket-write-batch.js';

/** The socket as the sender uses it: corkable, with Node's writable state. */
interface SocketLike extends CorkableStream {
  readonly writable?: boolean;
  readonly writableNeedDrain?: boolean;
  on(event: 'drain', listener: () => void): unknown;
  setNoDelay?(on: boolean): unknown;
}

/** What the sender needs from the connection. */
export interface ClientSenderInput {
  readonly broker: ResolvedBrokerConfig;
  readonly options: Pick<MqttConnectionOptions, 'maxQueuedOutgoing' | 'maxQueuedOutgoingBytes' | 'flushDelayMs' | 'flushBytes'>;
  /** The current client, if any. */
  readonly client: () => MqttClient | undefined;
  /** True while sending makes sense apart from the socket (not stopping). */
  readonly open: () => boolean;
}

/** The queue and the batch, and what to call when a connection comes up. */
export interface ClientSender {
  readonly queue: OutgoingQueue;
  readonly batch: SocketWriteBatch;
  /** Prepares a newly connected client's socket and sends what waited. */
  connected(c: MqttClient): void;
}

/** Creates a {@link ClientSender}. */
export function createClientSender(input: ClientSenderInput): ClientSender {
  const { broker, options, client, open } = input;
  const batch = createSocketWriteBatch({ delayMs: options.flushDelayMs ?? 1, maxBytes: options.flushBytes ?? 16384, protocolVersion: broker.protocolVersion });
  const socketOf = (c: MqttClient): SocketLike | undefined => c.stream as unknown as SocketLike | undefined;
  // The stream whose 'drain' resumes the queue; mqtt.js makes a new one per connection.
  let drainWatched: SocketLike | null = null;
  const queue = createOutgoingQueue({
    maxQueued: options.maxQueuedOutgoing ?? 10000,
    maxQueuedBytes: options.maxQueuedOutgoingBytes ?? 8 * 1024 * 1024,
    maxInFlight: broker.maxInflight,
    canSend: () => {
      const c = client();
      return c?.connected === true && open() && socketOf(c)?.writableNeedDrain !== true;
    },
    send: (topic, payload, qos, retain, done) => {
      const c = client();
      if (c === undefined) return;
      const stream = socketOf(c);
      const batching = stream !== undefined && typeof stream.cork === 'function';
      // QoS 0 has no state in the client (no packet id, no store, no acknowledgement), so it is
      // encoded straight into the batch.
      if (done === null && batching && stream.writable === true && batch.publishQos0(stream, topic, payload, retain)) return;
      if (batching) batch.open(stream);
      // mqtt.js copies the options, so shared constants do; a QoS 0 publish needs no callback.
      if (done === null) c.publish(topic, payload, publishOptionsFor(qos, retain));
      else c.publish(topic, payload, publishOptionsFor(qos, retain), done);
      batch.written();
    },
  });
  return {
    queue,
    batch,
    connected(c) {
      const stream = socketOf(c);
      if (stream !== undefined && stream !== drainWatched) {
        drainWatched = stream;
        stream.on('drain', () => queue.pump());
        // The batch already gathers small packets; Nagle's algorithm would hold each batch
        // back until the broker acknowledged the previous one (mqtt.js leaves it on).
        stream.setNoDelay?.(true);
      }
      queue.pump();
    },
  };
}
