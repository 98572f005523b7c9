/**
 * One partition this replica owns, through its life: claim → handover → restore from the
 * snapshot → consume from the snapshot's sequence + 1 (replay and live in one stream) → lost,
 * or stopped with a final snapshot. Every owner-record write (renewal, snapshot commit,
 * release) is a compare-and-swap on the revision kept from the claim, run one at a time.
 */
import type { OwnerRecord } from './owner-record.js';
import type { PartitionContext } from './partition-context.js';
import { PartitionIntake } from './partition-intake.js';
import { PartitionSnapshotStore, type PartitionSnapshot } from './partition-snapshots.js';
import { adoptCheckpoint, type TrackSet } from './partition-tracks.js';

/** Where a partition is in its life (module comment). */
export type PartitionPhase = 'claiming' | 'handover' | 'restoring' | 'consuming' | 'suspended' | 'lost' | 'stopped';

/** See the module comment. */
export class OwnedPartition {
  phase: PartitionPhase = 'claiming';
  /** The sequence of the last committed snapshot (0: none). */
  snapshotSeq = 0;
  private readonly intake: PartitionIntake;
  private claim: { record: OwnerRecord; revision: number } | null = null;
  private writes: Promise<void> = Promise.resolve();
  private lastRenewedMs = 0;
  /** A snapshot commit got no clear answer: the record may point at either slot. */
  private commitUnclear = false;

  constructor(readonly partition: number, private readonly ctx: PartitionContext) {
    this.intake = new PartitionIntake(partition, ctx, (reason) => {
      if (this.phase === 'consuming') this.suspend(reason);
    });
  }

  /** The last stream sequence handed to the engine (the snapshot's before the first message). */
  get seq(): number {
    return this.intake.seq;
  }

  /** True once the partition has caught up (see PartitionIntake). */
  get caughtUp(): boolean {
    return this.phase === 'consuming' && this.intake.caughtUp;
  }

  /** The epoch of our claim (0 before it). */
  get epoch(): number {
    return this.claim?.record.epoch ?? 0;
  }

  /** Messages waiting as last known (+Infinity when unknown). */
  get pending(): number {
    return this.intake.pending;
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
    this.phase = 'consuming';
    c.events.emit('partition:consuming', { partition: this.partition, epoch: this.epoch, fromSeq, restored, handover, snapshotProblem: problem });
    await this.intake.start(fromSeq);
  }

  /** Readiness poller: a partition whose pending count went stale gets a new consumer at seq + 1. */
  pollPending(): Promise<void> {
    if (this.phase !== 'consuming' || !this.intake.stale) return Promise.resolve();
    return this.serial(async () => {
      if (this.phase === 'consuming' && this.intake.stale) await this.intake.restart();
    });
  }

  /** The connection dropped. */
  disconnected(): void {
    this.intake.disconnected();
  }

  /** The connection is back: a new consumer at seq + 1 (PartitionIntake.restart). */
  reconnected(): Promise<void> {
    return this.serial(async () => {
      if (this.phase === 'consuming' && !this.ctx.stopping()) await this.intake.restart();
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
    void this.intake.stop();
    this.ctx.events.emit('partition:suspended', { partition: this.partition, reason });
    this.ctx.log.warn({ partition: this.partition, reason }, 'partition consumption suspended');
    this.ctx.changed();
  }

  private async resume(): Promise<void> {
    this.phase = 'consuming';
    this.ctx.events.emit('partition:resumed', { partition: this.partition, fromSeq: this.seq + 1 });
    await this.intake.restart();
  }

  private async lose(reason: string): Promise<void> {
    if (this.phase === 'lost' || this.phase === 'stopped') return;
    const epoch = this.epoch;
    this.phase = 'lost';
    const stopped = this.intake.stop(); // stops delivery synchronously; closing finishes later
    this.ctx.dropTracks(this.partition);
    this.ctx.events.emit('partition:lost', { partition: this.partition, epoch, reason });
    this.ctx.log.warn({ partition: this.partition, epoch, reason }, 'PARTITION LOST: stopped consuming it and writing its snapshots');
    this.ctx.changed();
    await stopped;
    // Acknowledge only after any snapshot write in flight has finished (queued behind it, not
    // awaited: lose() may run inside that very write), so the claimant never writes a slot
    // while this replica still does.
    void this.serial(() => this.ctx.ownership.acknowledgeHandover(this.partition, epoch));
  }

  /**
   * This partition's snapshot now, if there is something to write (always null for a partition
   * we do not hold). Synchronous with reading `seq`, so the cut is consistent.
   */
  prepareSnapshot(tracks: () => TrackSet): PartitionSnapshot | null {
    if (this.claim === null || (this.phase !== 'consuming' && this.phase !== 'suspended')) return null;
    if (this.seq === this.snapshotSeq) return null;
    return this.ctx.snapshots.build(this.partition, this.epoch, this.seq, tracks());
  }

  /**
   * Writes `snapshot` into the slot the record does not point at and commits it by the guarded
   * write; `final` also marks the record released. After a commit without a clear answer the
   * record may point at either slot, so the next write first reads which one it is.
   */
  commitSnapshot(snapshot: PartitionSnapshot | null, final: boolean): Promise<void> {
    return this.serial(async () => {
      const c = this.ctx;
      const claim = this.claim;
      if (claim === null || (snapshot === null && !final) || (this.phase !== 'consuming' && this.phase !== 'suspended')) return;
      let pointer = claim.record.snapshot;
      if (snapshot !== null) {
        const committed = this.commitUnclear ? (await c.ownership.current(this.partition))?.snapshot : claim.record.snapshot;
        if (committed === undefined) return; // no answer: do not risk writing over the committed slot
        try {
          pointer = await c.snapshots.write(snapshot, PartitionSnapshotStore.otherSlot(committed?.object ?? null, this.partition));
        } catch (err) {
          c.log.error({ partition: this.partition, err }, 'PARTITION SNAPSHOT WRITE FAILED; the next one will try again');
          return;
        }
        if ((this.phase as PartitionPhase) === 'lost') return;
      }
      const record: OwnerRecord = { ...claim.record, snapshot: pointer, state: final ? 'released' : 'active' };
      const result = await c.ownership.write(this.partition, record, claim.revision);
      if (result.kind === 'lost') return this.lose(result.reason);
      if (result.kind === 'unavailable') {
        this.commitUnclear = true;
        c.log.warn({ partition: this.partition, reason: result.reason }, 'partition snapshot not committed; the next one will try again');
        return;
      }
      this.commitUnclear = false;
      this.claim = { record, revision: result.revision };
      if (snapshot === null || pointer === null) return;
      this.snapshotSeq = snapshot.seq;
      c.counters.snapshots += 1;
      c.events.emit('snapshot:committed', { partition: this.partition, epoch: record.epoch, seq: snapshot.seq, object: pointer.object, final });
    });
  }

  /** Stops taking messages (before the final snapshot). */
  stopIntake(): Promise<void> {
    return this.intake.stop();
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
