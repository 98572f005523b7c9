/**
 * One partition this replica owns, through its life: claim → handover → restore from the
 * snapshot → consume from the snapshot's sequence + 1 (replay and live in one stream) → lost,
 * or stopped with a final snapshot. Every owner-record write (renewal, snapshot commit,
 * release) is a compare-and-swap on the revision kept from the claim, run one at a time.
 */
import type { JetStreamClient, JsMsg } from '@nats-io/jetstream';
import type { DeepReadonly } from '../../config/deep-freeze.js';
import type { ScaleOutConfig } from '../../config/scale-out-schema.js';
import type { EngineHandle } from '../../engine/engine-handle.js';
import type { OwnerRecord } from './owner-record.js';
import { PartitionConsumer } from './partition-consumer.js';
import type { PartitionOwnership } from './partition-ownership.js';
import type { PartitionSnapshot, PartitionSnapshotStore } from './partition-snapshots.js';
import { adoptCheckpoint, type TrackSet } from './partition-tracks.js';
import type { ScaleOutEvents } from './scale-out-events.js';
import type { PartitionRouter } from './subject-routes.js';

/** Where a partition is in its life (module comment). */
export type PartitionPhase = 'claiming' | 'handover' | 'restoring' | 'consuming' | 'suspended' | 'lost' | 'stopped';

/** The log calls a partition makes (pino's signature). */
export interface ScaleOutLogger {
  info(obj: object, msg: string): void;
  warn(obj: object, msg: string): void;
  error(obj: object, msg: string): void;
}

/** Counters shared by a node's partitions. */
export interface ScaleOutCounters {
  drift: number;
  unrouted: number;
  snapshots: number;
}

/** What a partition shares with its node. */
export interface PartitionContext {
  readonly config: DeepReadonly<ScaleOutConfig>;
  readonly js: JetStreamClient;
  readonly ownership: PartitionOwnership;
  readonly snapshots: PartitionSnapshotStore;
  readonly router: PartitionRouter;
  readonly handle: EngineHandle;
  readonly events: ScaleOutEvents;
  readonly log: ScaleOutLogger;
  readonly now: () => number;
  readonly counters: ScaleOutCounters;
  readonly stopping: () => boolean;
  /** Drops the partition's tracks from the engine (batched by the node). */
  readonly dropTracks: (partition: number) => void;
  /** Something readiness depends on changed. */
  readonly changed: () => void;
}

/** See the module comment. */
export class OwnedPartition {
  phase: PartitionPhase = 'claiming';
  /** True once fewer than readyPendingBelow messages wait (false again after a disconnect). */
  caughtUp = false;
  /** The last stream sequence handed to the engine (the snapshot's before the first message). */
  seq = 0;
  /** The sequence of the last committed snapshot (0: none). */
  snapshotSeq = 0;
  private claim: { record: OwnerRecord; revision: number } | null = null;
  private consumer: PartitionConsumer | null = null;
  private writes: Promise<void> = Promise.resolve();
  private lastRenewedMs = 0;
  private refreshing = false;
  /** Set by a disconnect until reconnected() has a new consumer: until then nothing is caught up. */
  private restartPending = false;
  /** Snapshot objects written whose commit is not confirmed (see commitSnapshot). */
  private uncertain: string[] = [];

  constructor(readonly partition: number, private readonly ctx: PartitionContext) {}

  /** The epoch of our claim (0 before it). */
  get epoch(): number {
    return this.claim?.record.epoch ?? 0;
  }

  /** Messages waiting as last known (+Infinity when unknown). */
  get pending(): number {
    return this.consumer?.pending ?? Number.POSITIVE_INFINITY;
  }

  /** Claims, waits for the handover, restores and starts consuming. Throws when the claim cannot be written. */
  async start(): Promise<void> {
    const c = this.ctx;
    const claim = await c.ownership.claim(this.partition);
    this.claim = { record: claim.record, revision: claim.revision };
    this.lastRenewedMs = c.now();
    this.phase = 'handover';
    c.events.emit('partition:claimed', { partition: this.partition, epoch: claim.record.epoch, previous: claim.previous?.replica ?? null });
    const handover = await c.ownership.waitForHandover(this.partition, claim.previous, () => this.phase !== 'handover' || c.stopping());
    if (this.phase !== 'handover') return;
    this.phase = 'restoring';
    let fromSeq = 1;
    let restored = 0;
    let problem: string | null = null;
    const pointer = claim.record.snapshot;
    if (pointer !== null) {
      const read = await c.snapshots.read(pointer, this.partition).catch((err: unknown) => ({ ok: false as const, reason: String(err) }));
      if (this.phase !== 'restoring') return;
      if (read.ok) {
        const adopted = adoptCheckpoint(c.handle.engine, read.snapshot.checkpoint, c.now());
        for (const s of adopted.skipped) c.log.warn({ partition: this.partition, ...s }, 'snapshot track not restored');
        restored = adopted.adopted;
        fromSeq = pointer.seq + 1;
        this.snapshotSeq = pointer.seq;
      } else {
        // Without the tracks, starting after the snapshot's sequence would lose their history:
        // replay the whole retention window instead.
        problem = read.reason;
        c.log.warn({ partition: this.partition, reason: read.reason }, 'partition snapshot unusable; replaying the stream from its start');
      }
    }
    this.seq = fromSeq - 1;
    this.phase = 'consuming';
    c.events.emit('partition:consuming', { partition: this.partition, epoch: this.epoch, fromSeq, restored, handover, snapshotProblem: problem });
    await this.startConsumer(fromSeq);
  }

  private async startConsumer(fromSeq: number): Promise<void> {
    const c = this.ctx;
    const consumer = new PartitionConsumer({
      js: c.js,
      stream: c.config.stream,
      filter: c.router.filterOf(this.partition),
      fromSeq,
      onMessage: (msg) => this.onMessage(msg),
    });
    this.consumer = consumer;
    this.caughtUp = false;
    try {
      await consumer.start();
    } catch (err) {
      if (this.consumer !== consumer) return;
      this.consumer = null;
      void consumer.stop();
      if (this.phase === 'consuming') this.suspend(`the consumer could not be created: ${String(err)}`);
      return;
    }
    this.checkCaughtUp();
  }

  private onMessage(msg: JsMsg): void {
    if (this.phase !== 'consuming') return;
    const c = this.ctx;
    this.seq = msg.seq;
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
    if (this.phase !== 'consuming' || this.caughtUp || this.consumer === null || this.restartPending) return;
    if (this.consumer.pending >= this.ctx.config.readyPendingBelow) return;
    this.caughtUp = true;
    this.ctx.events.emit('partition:caught-up', { partition: this.partition, seq: this.seq });
    this.ctx.changed();
  }

  /** Asks the server how far behind we are (readiness poller). */
  async pollPending(): Promise<void> {
    const consumer = this.consumer;
    if (this.phase !== 'consuming' || this.caughtUp || this.refreshing || consumer === null || this.restartPending) return;
    this.refreshing = true;
    try {
      if (await consumer.refreshPending()) this.checkCaughtUp();
    } finally {
      this.refreshing = false;
    }
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
  reconnected(): Promise<void> {
    return this.serial(async () => {
      if (this.phase !== 'consuming' || this.ctx.stopping()) return;
      const old = this.consumer;
      this.consumer = null;
      void old?.stop();
      this.restartPending = false;
      await this.startConsumer(this.seq + 1);
    });
  }

  /** An owner-record change seen by the watch: a newer epoch or a deleted record means lost. */
  observed(record: OwnerRecord | null): void {
    const claim = this.claim;
    if (claim === null || this.phase === 'lost' || this.phase === 'stopped') return;
    if (record === null) void this.lose('the owner record was deleted');
    else if (record.epoch > claim.record.epoch) void this.lose(`replica ${record.replica} claimed it with epoch ${record.epoch}`);
  }

  /** Renews the claim; a conflict loses the partition, leaseMs without success suspends consuming. */
  renew(): Promise<void> {
    return this.serial(async () => {
      const claim = this.claim;
      if (claim === null || this.phase === 'lost' || this.phase === 'stopped' || this.ctx.stopping()) return;
      const result = await this.ctx.ownership.write(this.partition, claim.record, claim.revision);
      if (result.kind === 'written') {
        claim.revision = result.revision;
        this.lastRenewedMs = this.ctx.now();
        if (this.phase === 'suspended') await this.resume();
      } else if (result.kind === 'lost') {
        await this.lose(result.reason);
      } else if (this.phase === 'consuming' && this.ctx.now() - this.lastRenewedMs > this.ctx.config.leaseMs) {
        // A claimant may start consuming leaseMs after its claim: stop before that can happen.
        this.suspend(`no renewal for ${this.ctx.config.leaseMs} ms: ${result.reason}`);
      }
    });
  }

  private suspend(reason: string): void {
    this.phase = 'suspended';
    this.caughtUp = false;
    const consumer = this.consumer;
    this.consumer = null;
    void consumer?.stop();
    this.ctx.events.emit('partition:suspended', { partition: this.partition, reason });
    this.ctx.log.warn({ partition: this.partition, reason }, 'partition consumption suspended');
    this.ctx.changed();
  }

  private async resume(): Promise<void> {
    this.phase = 'consuming';
    this.ctx.events.emit('partition:resumed', { partition: this.partition, fromSeq: this.seq + 1 });
    await this.startConsumer(this.seq + 1);
  }

  private async lose(reason: string): Promise<void> {
    if (this.phase === 'lost' || this.phase === 'stopped') return;
    const epoch = this.epoch;
    this.phase = 'lost';
    this.caughtUp = false;
    const consumer = this.consumer;
    this.consumer = null;
    const stopped = consumer?.stop(); // stops delivery synchronously; closing finishes later
    this.ctx.dropTracks(this.partition);
    this.ctx.events.emit('partition:lost', { partition: this.partition, epoch, reason });
    this.ctx.log.warn({ partition: this.partition, epoch, reason }, 'PARTITION LOST: stopped consuming it and writing its snapshots');
    this.ctx.changed();
    await stopped;
    await this.ctx.ownership.acknowledgeHandover(this.partition, epoch);
    await this.discardUnreferenced();
  }

  /**
   * This partition's snapshot now, if there is something to write (always null for a partition
   * we do not hold). Synchronous with reading `seq`, so the cut is consistent.
   */
  prepareSnapshot(groups: ReadonlyMap<number, TrackSet>): PartitionSnapshot | null {
    if (this.claim === null || (this.phase !== 'consuming' && this.phase !== 'suspended')) return null;
    if (this.seq === this.snapshotSeq) return null;
    return this.ctx.snapshots.build(this.partition, this.epoch, this.seq, groups.get(this.partition) ?? new Map());
  }

  /**
   * Writes `snapshot` and commits it by the guarded write; `final` also marks the record
   * released. An object whose commit had no clear answer may be what the record points at, so
   * it is removed only once a later commit, or the record after a loss, shows it is not.
   */
  commitSnapshot(snapshot: PartitionSnapshot | null, final: boolean): Promise<void> {
    return this.serial(async () => {
      const c = this.ctx;
      const claim = this.claim;
      if (claim === null || (snapshot === null && !final) || (this.phase !== 'consuming' && this.phase !== 'suspended')) return;
      let pointer = claim.record.snapshot;
      if (snapshot !== null) {
        try {
          pointer = await c.snapshots.write(snapshot);
        } catch (err) {
          c.log.error({ partition: this.partition, err }, 'PARTITION SNAPSHOT WRITE FAILED; the next one will try again');
          return;
        }
        this.uncertain.push(pointer.object);
        if ((this.phase as PartitionPhase) === 'lost') return this.discardUnreferenced();
      }
      const record: OwnerRecord = { ...claim.record, snapshot: pointer, state: final ? 'released' : 'active' };
      const result = await c.ownership.write(this.partition, record, claim.revision);
      if (result.kind === 'lost') return this.lose(result.reason);
      if (result.kind === 'unavailable') {
        c.log.warn({ partition: this.partition, reason: result.reason }, 'partition snapshot not committed; the next one will try again');
        return;
      }
      const garbage = [...this.uncertain, claim.record.snapshot?.object].filter((o): o is string => o !== undefined && o !== pointer?.object);
      this.uncertain = [];
      this.claim = { record, revision: result.revision };
      for (const object of garbage) void c.snapshots.remove(object);
      if (snapshot === null || pointer === null) return;
      this.snapshotSeq = snapshot.seq;
      c.counters.snapshots += 1;
      c.events.emit('snapshot:committed', { partition: this.partition, epoch: record.epoch, seq: snapshot.seq, object: pointer.object, final });
    });
  }

  /** After a loss: removes our uncommitted objects unless the new owner's record points at one. */
  private async discardUnreferenced(): Promise<void> {
    if (this.uncertain.length === 0) return;
    const current = await this.ctx.ownership.current(this.partition);
    if (current === null) return; // no answer: keep them rather than risk the committed one
    for (const object of this.uncertain) if (current.snapshot?.object !== object) void this.ctx.snapshots.remove(object);
    this.uncertain = [];
  }

  /** Stops taking messages (before the final snapshot). */
  async stopIntake(): Promise<void> {
    const consumer = this.consumer;
    this.consumer = null;
    await consumer?.stop();
  }

  /** Marks the partition stopped (after the final snapshot). */
  markStopped(): void {
    if (this.phase !== 'lost') this.phase = 'stopped';
  }

  private serial(work: () => Promise<void>): Promise<void> {
    const next = this.writes.then(work, work);
    this.writes = next.catch(() => undefined);
    return next;
  }
}
