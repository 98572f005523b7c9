/**
 * Per-partition snapshots in a JetStream object store: the checkpoint document of the tracks of
 * one partition (checkpoint-document.ts) plus the stream sequence it covers. Each partition has
 * two slots, `partition-<p>-a` and `-b`; a snapshot is written into the slot the owner record
 * does not point at and becomes the partition's snapshot only when the record's pointer is
 * moved to it by a compare-and-swap (owned-partition.ts). So the committed object is never
 * overwritten while a claimant may read it, and the store holds at most two objects per
 * partition (unique names would leave a delete marker per write in the store for ever).
 */
import type { ObjectStore } from '@nats-io/obj';
import type { Track } from '../../estimation/track.js';
import { checkDocument, checkpointDocument, isDocumentIssue, type CheckpointDocument } from '../checkpoint/checkpoint-document.js';
import type { SnapshotPointer } from './owner-record.js';

/** The value of a snapshot's `format` field. */
export const PARTITION_SNAPSHOT_FORMAT = 'statecast-partition-snapshot';

/** One partition's snapshot. */
export interface PartitionSnapshot {
  readonly format: typeof PARTITION_SNAPSHOT_FORMAT;
  readonly version: 1;
  readonly partition: number;
  /** The owner epoch it was written under. */
  readonly epoch: number;
  /** The last stream sequence included. */
  readonly seq: number;
  readonly checkpoint: CheckpointDocument;
}

/** A snapshot read back, or why it cannot be used. */
export type SnapshotRead = { readonly ok: true; readonly snapshot: PartitionSnapshot } | { readonly ok: false; readonly reason: string };

const READ_ATTEMPTS = 3;
const READ_TIMEOUT_MS = 10_000;
const encoder = new TextEncoder();
const decoder = new TextDecoder();

/** See the module comment. */
export class PartitionSnapshotStore {
  /** `fingerprint`: the structural configuration fingerprint a snapshot must carry to be restored. */
  constructor(private readonly store: ObjectStore, private readonly fingerprint: string) {}

  /** The object name of a partition's slot. */
  static objectName(partition: number, slot: 'a' | 'b'): string {
    return `partition-${partition}-${slot}`;
  }

  /** The slot to write next: the one `committed` (an object name, or null) is not. */
  static otherSlot(committed: string | null, partition: number): 'a' | 'b' {
    return committed === PartitionSnapshotStore.objectName(partition, 'a') ? 'b' : 'a';
  }

  /**
   * The snapshot of one partition's tracks as of stream sequence `seq`. Copies every track's
   * state synchronously, so call it in the same tick as reading `seq`: the cut is consistent.
   */
  build(partition: number, epoch: number, seq: number, tracks: ReadonlyMap<string, ReadonlyMap<string, Track>>): PartitionSnapshot {
    return { format: PARTITION_SNAPSHOT_FORMAT, version: 1, partition, epoch, seq, checkpoint: checkpointDocument(tracks, this.fingerprint) };
  }

  /**
   * Stores a built snapshot in `slot`; returns the pointer to commit in the owner record. The
   * description names the writer's epoch and sequence, for operators reading the store.
   */
  async write(snapshot: PartitionSnapshot, slot: 'a' | 'b'): Promise<SnapshotPointer> {
    const object = PartitionSnapshotStore.objectName(snapshot.partition, slot);
    await this.store.putBlob({ name: object, description: `epoch ${snapshot.epoch} seq ${snapshot.seq}` }, encoder.encode(JSON.stringify(snapshot)));
    return { object, seq: snapshot.seq };
  }

  /** Reads the snapshot a record points at and checks it belongs to `partition` and this configuration. */
  async read(pointer: SnapshotPointer, partition: number): Promise<SnapshotRead> {
    let bytes: Uint8Array | null = null;
    for (let attempt = 1; ; attempt++) {
      try {
        bytes = await this.readObject(pointer.object);
        break;
      } catch (err) {
        if (attempt === READ_ATTEMPTS) return { ok: false, reason: `object ${pointer.object} could not be read: ${String(err)}` };
      }
    }
    if (bytes === null) return { ok: false, reason: `object ${pointer.object} is missing from the snapshot store` };
    let value: unknown;
    try {
      value = JSON.parse(decoder.decode(bytes));
    } catch {
      return { ok: false, reason: `object ${pointer.object} is not JSON` };
    }
    const v = value as Partial<PartitionSnapshot> | null;
    if (v === null || typeof v !== 'object' || v.format !== PARTITION_SNAPSHOT_FORMAT || v.version !== 1) {
      return { ok: false, reason: `object ${pointer.object} is not a ${PARTITION_SNAPSHOT_FORMAT} version 1` };
    }
    if (v.partition !== partition || v.seq !== pointer.seq) {
      return { ok: false, reason: `object ${pointer.object} holds partition ${String(v.partition)} at seq ${String(v.seq)}, not ${partition} at ${pointer.seq}` };
    }
    const doc = checkDocument(v.checkpoint, this.fingerprint);
    if (isDocumentIssue(doc)) return { ok: false, reason: doc.reason };
    return { ok: true, snapshot: { ...(v as PartitionSnapshot), checkpoint: doc } };
  }

  /**
   * An object's bytes, or null when it does not exist. The client waits for an object's chunks
   * without a time limit (they may have been purged after its metadata was read), so the read
   * is bounded here and cancelled when it takes too long.
   */
  private async readObject(name: string): Promise<Uint8Array | null> {
    const result = await this.store.get(name);
    if (result === null) return null;
    void result.error.catch(() => undefined); // a corrupt object also errors the stream below
    const reader = result.data.getReader();
    const chunks: Uint8Array[] = [];
    let timer: NodeJS.Timeout | undefined;
    const timeout = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error(`no data for ${READ_TIMEOUT_MS} ms`)), READ_TIMEOUT_MS);
    });
    try {
      for (;;) {
        const { done, value } = await Promise.race([reader.read(), timeout]);
        if (done) break;
        chunks.push(value);
      }
    } catch (err) {
      void reader.cancel().catch(() => undefined);
      throw err;
    } finally {
      clearTimeout(timer);
    }
    const out = new Uint8Array(chunks.reduce((n, c) => n + c.length, 0));
    let offset = 0;
    for (const c of chunks) out.set(c, (offset += c.length) - c.length);
    return out;
  }
}
