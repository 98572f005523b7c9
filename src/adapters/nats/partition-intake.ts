/**
 * One partition's flow of messages into the engine: its consumer, the last stream sequence
 * handed over, the config-drift check, and whether it has caught up (readiness).
 */
import type { JsMsg } from '@nats-io/jetstream';
import type { PartitionContext } from './partition-context.js';
import { PartitionConsumer } from './partition-consumer.js';

/**
 * How long a partition that has not caught up may go without a message before its consumer is
 * recreated at seq + 1. Every message and a new consumer's creation info carry the pending
 * count, so this only repairs a count that went stale (messages aged out of the stream, say).
 * We never poll a consumer's info for it: nats-server 2.9 counts a wildcard filter's pending
 * messages by scanning the stream on each such request, and a dozen of them during a
 * 20,000-message catch-up cost the server 4-10 s of CPU and halved the replica's rate. A new
 * consumer is counted once, and only after STALE_AFTER_MS of silence.
 */
const STALE_AFTER_MS = 10_000;

/** See the module comment. */
export class PartitionIntake {
  /** The last stream sequence handed to the engine. */
  seq = 0;
  /** True once fewer than readyPendingBelow messages wait (false again after a disconnect). */
  caughtUp = false;
  private consumer: PartitionConsumer | null = null;
  /** When a message or a new consumer last told us the pending count (ms, the node's clock). */
  private lastToldMs = 0;
  /** Set by a disconnect until restart() has a new consumer: until then nothing is caught up. */
  private restartPending = false;

  /** `onFailed`: the consumer could not be created (the owner suspends the partition). */
  constructor(private readonly partition: number, private readonly ctx: PartitionContext, private readonly onFailed: (reason: string) => void) {}

  /** Messages waiting as last known (+Infinity when unknown or stopped). */
  get pending(): number {
    return this.consumer?.pending ?? Number.POSITIVE_INFINITY;
  }

  /** Starts delivery at `fromSeq` (stopping any consumer before). */
  async start(fromSeq: number): Promise<void> {
    void this.stop();
    const c = this.ctx;
    this.seq = fromSeq - 1;
    const consumer = new PartitionConsumer({
      js: c.js, stream: c.config.stream, filter: c.router.filterOf(this.partition), fromSeq, batch: c.batch, onMessage: (msg) => this.onMessage(msg),
    });
    this.consumer = consumer;
    this.restartPending = false;
    this.lastToldMs = this.ctx.now();
    try {
      await consumer.start();
    } catch (err) {
      if (this.consumer !== consumer) return;
      this.consumer = null;
      void consumer.stop();
      this.onFailed(`the consumer could not be created: ${String(err)}`);
      return;
    }
    this.checkCaughtUp();
  }

  /** Stops delivery now (nothing more reaches the engine); resolves once the consumer closed. */
  stop(): Promise<void> {
    this.caughtUp = false;
    const consumer = this.consumer;
    this.consumer = null;
    return consumer?.stop() ?? Promise.resolve();
  }

  /** True while a consumer delivers. */
  get running(): boolean {
    return this.consumer !== null;
  }

  private onMessage(msg: JsMsg): void {
    const c = this.ctx;
    this.seq = msg.seq;
    this.lastToldMs = this.ctx.now();
    const routed = c.router.route(msg.subject);
    if (routed === null) {
      c.counters.unrouted += 1;
      return;
    }
    if (routed.expected === -1) c.counters.unrouted += 1;
    else if (routed.expected !== routed.partition) {
      c.counters.drift += 1;
      c.events.emit('drift', { partition: routed.partition, expected: routed.expected, subject: msg.subject });
    }
    // The broker's receive time, not ours: a replay then decodes exactly as the live run did.
    const arrivalMs = Math.floor(msg.info.timestampNanos / 1e6);
    c.handle.engine.handleMessage(routed.topic, msg.data, arrivalMs);
    if (c.events.has('message')) c.events.emit('message', { partition: this.partition, seq: msg.seq, topic: routed.topic, arrivalMs });
    if (!this.caughtUp) this.checkCaughtUp();
  }

  private checkCaughtUp(): void {
    if (this.caughtUp || this.consumer === null || this.restartPending) return;
    if (this.consumer.pending >= this.ctx.config.readyPendingBelow) return;
    this.caughtUp = true;
    this.ctx.events.emit('partition:caught-up', { partition: this.partition, seq: this.seq });
    this.ctx.changed();
  }

  /** True when not caught up and no message has told the pending count for STALE_AFTER_MS. */
  get stale(): boolean {
    return !this.caughtUp && this.consumer !== null && !this.restartPending && this.ctx.now() - this.lastToldMs >= STALE_AFTER_MS;
  }

  /** The connection dropped: what we knew about pending no longer holds. */
  disconnected(): void {
    this.caughtUp = false;
    this.restartPending = true;
    if (this.consumer !== null) this.consumer.pending = Number.POSITIVE_INFINITY;
  }

  /**
   * The connection is back: the server may have restarted and lost the consumer (ordered
   * consumers are in memory), so start a new one at seq + 1 rather than wait for missed
   * heartbeats to tell. The old one stops delivering first, so nothing is handled twice.
   */
  restart(): Promise<void> {
    return this.start(this.seq + 1);
  }
}
