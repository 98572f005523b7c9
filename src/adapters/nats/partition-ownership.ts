/**
 * Claims, renews and hands over partitions through compare-and-swap writes to the owners KV
 * bucket (record format in owner-record.ts).
 *
 * Handover rule: a claim bumps the epoch at once; the previous owner learns of it from its watch
 * (milliseconds) or its next renewal (renewMs), stops consuming, and acknowledges under
 * `handover.<p>`. The claimant consumes only after that acknowledgement, after a record marked
 * `released` (graceful stop), or after leaseMs (a dead owner never acknowledges; a live one that
 * cannot reach the server cannot consume either). So two replicas never consume one partition
 * at the same time for longer than the loser's detection delay, and never after the claimant
 * starts.
 */
import { JetStreamApiError } from '@nats-io/jetstream';
import { KvWatchInclude, type KV } from '@nats-io/kv';
import {
  decodeHandoverRecord,
  decodeOwnerRecord,
  encodeRecord,
  handoverKey,
  ownerKey,
  partitionOfOwnerKey,
  type OwnerRecord,
} from './owner-record.js';

/** Who is claiming. */
export interface ClaimantIdentity {
  readonly replica: string;
  readonly ordinal: number;
  readonly replicas: number;
}

/** A won claim: the record written and the revision every later write must name. */
export interface Claim {
  readonly record: OwnerRecord;
  readonly revision: number;
  /** The record replaced (null for a partition never owned). */
  readonly previous: OwnerRecord | null;
}

/** The outcome of a guarded write: the new revision, or lost (a CAS conflict), or unavailable. */
export type GuardedWrite =
  | { readonly kind: 'written'; readonly revision: number }
  | { readonly kind: 'lost'; readonly reason: string }
  | { readonly kind: 'unavailable'; readonly reason: string };

/** How a claimant came to consume: see the module comment. */
export type HandoverOutcome = 'first-owner' | 'released' | 'acknowledged' | 'lease-expired';

const CLAIM_ATTEMPTS = 8;
const UNAVAILABLE_RETRY_MS = 250;

const delay = (ms: number): Promise<void> => new Promise((resolve) => setTimeout(resolve, ms));
const HANDOVER_POLL_MS = 20;

/** JetStream's "wrong last sequence" codes: the compare-and-swap found another revision. */
function isCasConflict(err: unknown): boolean {
  return err instanceof JetStreamApiError && (err.code === 10071 || err.code === 10164);
}

function describe(err: unknown): string {
  return err instanceof Error ? err.message : String(err);
}

/** See the module comment. */
export class PartitionOwnership {
  constructor(private readonly kv: KV, private readonly identity: ClaimantIdentity, private readonly leaseMs: number) {}

  /**
   * Claims a partition with the next epoch, carrying its snapshot pointer forward. A write that
   * timed out may still have been applied, so after any failure the record is read again: if it
   * holds our replica id and the epoch we tried, the claim is ours.
   */
  async claim(partition: number): Promise<Claim> {
    const key = ownerKey(partition);
    let lastError: unknown = null;
    let tried: { record: OwnerRecord; previous: OwnerRecord | null } | null = null;
    for (let attempt = 0; attempt < CLAIM_ATTEMPTS; attempt++) {
      const entry = await this.kv.get(key).catch((err: unknown) => ((lastError = err), undefined));
      if (entry === undefined) {
        await delay(UNAVAILABLE_RETRY_MS);
        continue;
      }
      const current = entry !== null && entry.operation === 'PUT' ? decodeOwnerRecord(entry.value) : null;
      if (tried !== null && current !== null && this.isOurs(current, tried.record.epoch)) return { record: current, revision: entry!.revision, previous: tried.previous };
      const record: OwnerRecord = {
        ...this.identity,
        // An epoch never exceeds the revision that wrote it, so a record that was deleted or
        // overwritten with something unreadable still gets a larger epoch than any before it.
        epoch: (current !== null ? current.epoch : (entry?.revision ?? 0)) + 1,
        state: 'active',
        snapshot: current?.snapshot ?? null,
      };
      tried = { record, previous: current };
      try {
        const revision = entry === null ? await this.kv.create(key, encodeRecord(record)) : await this.kv.update(key, encodeRecord(record), entry.revision);
        return { record, revision, previous: current };
      } catch (err) {
        lastError = err; // another claimant wrote between our read and write, or no answer: read again
        if (!isCasConflict(err)) await delay(UNAVAILABLE_RETRY_MS);
      }
    }
    throw new Error(`could not claim partition ${partition} in ${CLAIM_ATTEMPTS} attempts: ${describe(lastError)}`);
  }

  private isOurs(record: OwnerRecord, epoch: number): boolean {
    return record.epoch === epoch && record.replica === this.identity.replica;
  }

  /** The partition's owner record now, or null (absent, deleted, unreadable or no answer). Never throws. */
  async current(partition: number): Promise<OwnerRecord | null> {
    const entry = await this.kv.get(ownerKey(partition)).catch(() => null);
    return entry === null || entry.operation !== 'PUT' ? null : decodeOwnerRecord(entry.value);
  }

  /** Waits until the previous owner cannot be consuming any more (module comment). */
  async waitForHandover(partition: number, previous: OwnerRecord | null, stopped: () => boolean): Promise<HandoverOutcome> {
    if (previous === null) return 'first-owner';
    if (previous.state === 'released') return 'released';
    const deadline = Date.now() + this.leaseMs;
    while (Date.now() < deadline && !stopped()) {
      const entry = await this.kv.get(handoverKey(partition)).catch(() => null);
      const ack = entry === null || entry.operation !== 'PUT' ? null : decodeHandoverRecord(entry.value);
      if (ack !== null && ack.epoch >= previous.epoch) return 'acknowledged';
      await delay(HANDOVER_POLL_MS);
    }
    return 'lease-expired';
  }

  /**
   * Replaces the owner record if it is still at `revision`. Never throws. A conflict is a loss
   * only if the record now holds another epoch: when it still holds ours, an earlier write of
   * ours that timed out was applied after all, and the write is retried on its revision.
   */
  async write(partition: number, record: OwnerRecord, revision: number): Promise<GuardedWrite> {
    const key = ownerKey(partition);
    try {
      return { kind: 'written', revision: await this.kv.update(key, encodeRecord(record), revision) };
    } catch (err) {
      if (!isCasConflict(err)) return { kind: 'unavailable', reason: describe(err) };
    }
    try {
      const entry = await this.kv.get(key);
      const current = entry === null || entry.operation !== 'PUT' ? null : decodeOwnerRecord(entry.value);
      if (entry === null || current === null || !this.isOurs(current, record.epoch)) {
        return { kind: 'lost', reason: current === null ? 'the owner record was deleted or overwritten' : `replica ${current.replica} claimed it with epoch ${current.epoch}` };
      }
      return { kind: 'written', revision: await this.kv.update(key, encodeRecord(record), entry.revision) };
    } catch (err) {
      return isCasConflict(err) ? { kind: 'lost', reason: 'the owner record changed twice during one write' } : { kind: 'unavailable', reason: describe(err) };
    }
  }

  /** Tells a claimant that this replica has stopped consuming the partition under `epoch`. Never throws. */
  async acknowledgeHandover(partition: number, epoch: number): Promise<void> {
    await this.kv.put(handoverKey(partition), encodeRecord({ epoch, replica: this.identity.replica })).catch(() => undefined);
  }

  /**
   * Calls `onRecord` for every owner-record change (and the current values first); a deleted or
   * unreadable record comes as null. Re-opens the watch if the server ends it. Returns a stop.
   */
  watch(onRecord: (partition: number, record: OwnerRecord | null) => void): () => void {
    let stopped = false;
    let current: { stop(): void } | null = null;
    const run = async (): Promise<void> => {
      while (!stopped) {
        try {
          const it = await this.kv.watch({ key: 'owner.>', include: KvWatchInclude.LastValue });
          current = it;
          if (stopped) it.stop();
          for await (const e of it) {
            const partition = partitionOfOwnerKey(e.key);
            if (partition >= 0) onRecord(partition, e.operation === 'PUT' ? decodeOwnerRecord(e.value) : null);
          }
        } catch {
          // the connection is down or closing; try again below unless stopped
        }
        if (!stopped) await delay(UNAVAILABLE_RETRY_MS);
      }
    };
    void run();
    return () => {
      stopped = true;
      current?.stop();
    };
  }
}
