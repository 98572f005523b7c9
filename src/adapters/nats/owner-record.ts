/**
 * The owner record of one partition, kept in the owners KV bucket under `owner.<partition>`.
 * Every write to it is a compare-and-swap on the revision the writer last saw, so the record is
 * also the fencing token: a replica whose write fails has lost the partition. The record carries
 * the pointer to the partition's committed snapshot, so committing a snapshot and proving
 * ownership are one atomic write.
 */

/** Where a partition's committed snapshot is and which stream sequence it covers. */
export interface SnapshotPointer {
  /** Object name in the snapshots store. */
  readonly object: string;
  /** The last stream sequence whose message the snapshot includes (consume from seq + 1). */
  readonly seq: number;
}

/** One partition's owner (see the module comment). */
export interface OwnerRecord {
  /** The claiming process's replica id. */
  readonly replica: string;
  /** Its ordinal and the replica count it was configured with (for operators reading the bucket). */
  readonly ordinal: number;
  readonly replicas: number;
  /** Incremented by every claim; a record with another epoch than ours means we lost. */
  readonly epoch: number;
  /** `released` after a graceful stop: a claimant need not wait for a handover. */
  readonly state: 'active' | 'released';
  readonly snapshot: SnapshotPointer | null;
}

/** The acknowledgement a replica leaves under `handover.<partition>` once it stopped a lost partition. */
export interface HandoverRecord {
  /** The epoch it owned and has stopped consuming under. */
  readonly epoch: number;
  readonly replica: string;
}

const encoder = new TextEncoder();
const decoder = new TextDecoder();

/** The KV key of a partition's owner record. */
export function ownerKey(partition: number): string {
  return `owner.${partition}`;
}

/** The KV key of a partition's handover acknowledgement. */
export function handoverKey(partition: number): string {
  return `handover.${partition}`;
}

/** The partition of an owner key, or -1 for another key. */
export function partitionOfOwnerKey(key: string): number {
  const m = /^owner\.(\d{1,9})$/.exec(key);
  return m === null ? -1 : Number(m[1]);
}

/** JSON bytes of a record. */
export function encodeRecord(record: OwnerRecord | HandoverRecord): Uint8Array {
  return encoder.encode(JSON.stringify(record));
}

function parse(bytes: Uint8Array): Record<string, unknown> | null {
  try {
    const v: unknown = JSON.parse(decoder.decode(bytes));
    return typeof v === 'object' && v !== null && !Array.isArray(v) ? (v as Record<string, unknown>) : null;
  } catch {
    return null;
  }
}

const isCount = (v: unknown): v is number => typeof v === 'number' && Number.isInteger(v) && v >= 0;

/** The record in a KV value, or null when it is not one (written by something else). */
export function decodeOwnerRecord(bytes: Uint8Array): OwnerRecord | null {
  const v = parse(bytes);
  if (v === null) return null;
  const { replica, ordinal, replicas, epoch, state, snapshot } = v;
  if (typeof replica !== 'string' || !isCount(ordinal) || !isCount(replicas) || !isCount(epoch)) return null;
  if (state !== 'active' && state !== 'released') return null;
  let pointer: SnapshotPointer | null = null;
  if (snapshot !== null) {
    if (typeof snapshot !== 'object' || snapshot === undefined) return null;
    const { object, seq } = snapshot as Record<string, unknown>;
    if (typeof object !== 'string' || !isCount(seq)) return null;
    pointer = { object, seq };
  }
  return { replica, ordinal, replicas, epoch, state, snapshot: pointer };
}

/** The acknowledgement in a KV value, or null. */
export function decodeHandoverRecord(bytes: Uint8Array): HandoverRecord | null {
  const v = parse(bytes);
  if (v === null || !isCount(v['epoch']) || typeof v['replica'] !== 'string') return null;
  return { epoch: v['epoch'], replica: v['replica'] };
}
