/**
 * Consumes one partition's subjects from the stream, in stream order, from a given sequence:
 * an ordered consumer (no acks; the client recreates it at the next sequence after a gap, a
 * reconnect or a broker restart), so replay and live traffic arrive as one sequence. It keeps
 * the last sequence handled and how many messages wait, which decides readiness.
 */
import { DeliverPolicy, type Consumer, type ConsumerMessages, type JetStreamClient, type JsMsg } from '@nats-io/jetstream';

/** What a partition consumer needs. */
export interface PartitionConsumerOptions {
  readonly js: JetStreamClient;
  readonly stream: string;
  /** The partition's subject filter, e.g. `p.17.>`. */
  readonly filter: string;
  /** The first stream sequence to deliver (the snapshot's seq + 1). */
  readonly fromSeq: number;
  /** Called for each message in order; must not throw (the engine never does). */
  readonly onMessage: (msg: JsMsg) => void;
  /** Messages asked for per pull. */
  readonly batch?: number;
}

/** See the module comment. */
export class PartitionConsumer {
  /** The last stream sequence handed to onMessage (fromSeq − 1 before the first). */
  lastSeq: number;
  /** Messages still waiting on the server as last reported; +Infinity until known. */
  pending = Number.POSITIVE_INFINITY;
  private consumer: Consumer | null = null;
  private messages: ConsumerMessages | null = null;
  private stopped = false;

  constructor(private readonly options: PartitionConsumerOptions) {
    this.lastSeq = options.fromSeq - 1;
  }

  /** Creates the consumer and starts delivery. Idempotent. */
  async start(): Promise<void> {
    if (this.consumer !== null || this.stopped) return;
    const o = this.options;
    this.consumer = await o.js.consumers.get(o.stream, {
      filter_subjects: o.filter,
      deliver_policy: DeliverPolicy.StartSequence,
      opt_start_seq: o.fromSeq,
    });
    this.pending = (await this.consumer.info(true)).num_pending;
    if (this.stopped) return;
    this.messages = await this.consumer.consume({
      max_messages: o.batch ?? 256,
      // Heartbeats every expires/2: a broker restart is noticed within seconds, not 15 s.
      expires: 5000,
      callback: (msg) => this.deliver(msg),
    });
    void this.watchStatus(this.messages);
  }

  private deliver(msg: JsMsg): void {
    if (this.stopped || msg.seq <= this.lastSeq) return;
    this.lastSeq = msg.seq;
    this.pending = msg.info.pending;
    this.options.onMessage(msg);
  }

  private async watchStatus(messages: ConsumerMessages): Promise<void> {
    for await (const s of messages.status()) {
      if (this.stopped) break;
      // A recreated consumer starts at lastSeq + 1; its creation info counts what waits.
      if (s.type === 'ordered_consumer_recreated') await this.refreshPending();
    }
  }

  /**
   * The pending count from the consumer's creation info (the client refreshes it when it
   * recreates an ordered consumer). Never asks the server: see partition-intake.ts.
   */
  private async refreshPending(): Promise<void> {
    const consumer = this.consumer;
    if (consumer === null || this.stopped) return;
    this.pending = (await consumer.info(true)).num_pending;
  }

  /** Stops delivery; messages still in flight are dropped, not handled. Idempotent. */
  async stop(): Promise<void> {
    this.stopped = true;
    const messages = this.messages;
    this.messages = null;
    if (messages !== null) await messages.close().catch(() => undefined);
  }
}
