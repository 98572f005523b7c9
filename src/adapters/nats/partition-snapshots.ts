/**
 * Per-partition snapshots in a JetStream object store: the checkpoint document of the tracks of
 * one partition (checkpoint-document.ts) plus the stream sequence it covers. An object is only
 * a candidate until the owner record points at it (partition-ownership.ts commits the pointer
 * with a compare-and-swap); objects no record points at are deleted by their writer.
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

const encoder = new TextEncoder();
const decoder = new TextDecoder();

/** See the module comment. */
export class PartitionSnapshotStore {
  /** `fingerprint`: the structural configuration fingerprint a snapshot must carry to be restored. */
  constructor(private readonly store: ObjectStore, private readonly fingerprint: string) {}

  /** The object name of a snapshot; unique per (partition, epoch, seq). */
  static objectName(partition: number, epoch: number, seq: number): string {
    return `partition-${partition}-e${epoch}-s${seq}`;
  }

  /**
   * The snapshot of one partition's tracks as of stream sequence `seq`. Copies every track's
   * state synchronously, so call it in the same tick as reading `seq`: the cut is consistent.
   */
  build(partition: number, epoch: number, seq: number, tracks: ReadonlyMap<string, ReadonlyMap<string, Track>>): PartitionSnapshot {
    return { format: PARTITION_SNAPSHOT_FORMAT, version: 1, partition, epoch, seq, checkpoint: checkpointDocument(tracks, this.fingerprint) };
  }

  /** Stores a built snapshot; returns the pointer to commit in the owner record. */
  async write(snapshot: PartitionSnapshot): Promise<SnapshotPointer> {
    const object = PartitionSnapshotStore.objectName(snapshot.partition, snapshot.epoch, snapshot.seq);
    await this.store.putBlob({ name: object }, encoder.encode(JSON.stringify(snapshot)));
    return { object, seq: snapshot.seq };
  }

  /** Reads the snapshot a record points at and checks it belongs to `partition` and this configuration. */
  async read(pointer: SnapshotPointer, partition: number): Promise<SnapshotRead> {
    const bytes = await this.store.getBlob(pointer.object);
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

  /** Deletes an object (a superseded or uncommitted snapshot). Never throws. */
  async remove(object: string): Promise<void> {
    await this.store.delete(object).catch(() => undefined);
  }
}
