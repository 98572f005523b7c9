/**
 * Opens (and, when the config allows, creates) the JetStream pieces scale-out mode runs on: the
 * partition stream, whose age limit is the replay window; the owners KV bucket; and the
 * snapshots object store. Creating is idempotent; an existing stream that does not capture the
 * partition subjects is a configuration error, reported rather than changed.
 */
import { DiscardPolicy, RetentionPolicy, StorageType, type JetStreamManager } from '@nats-io/jetstream';
import { Kvm, type KV } from '@nats-io/kv';
import { Objm, type ObjectStore } from '@nats-io/obj';
import type { DeepReadonly } from '../../config/deep-freeze.js';
import type { ScaleOutConfig } from '../../config/scale-out-schema.js';

/** The opened pieces. */
export interface JetStreamPieces {
  readonly owners: KV;
  readonly snapshots: ObjectStore;
}

/** Thrown when an existing stream does not fit, or a piece is missing with provision: false. */
export class ScaleOutSetupError extends Error {
  override name = 'ScaleOutSetupError';
}

function isNotFound(err: unknown): boolean {
  return err instanceof Error && /not found/i.test(err.message);
}

/** Ensures the stream exists and captures `<prefix>.>`. */
async function ensureStream(jsm: JetStreamManager, c: DeepReadonly<ScaleOutConfig>): Promise<void> {
  const subject = `${c.subjectPrefix}.>`;
  try {
    const info = await jsm.streams.info(c.stream);
    if (!(info.config.subjects ?? []).includes(subject)) {
      throw new ScaleOutSetupError(`stream ${c.stream} captures ${JSON.stringify(info.config.subjects)}, not ${subject}`);
    }
    return;
  } catch (err) {
    if (!isNotFound(err)) throw err;
  }
  if (!c.provision) throw new ScaleOutSetupError(`stream ${c.stream} does not exist and scaleOut.provision is false`);
  await jsm.streams.add(partitionStreamConfig(c));
}

/** The partition stream the daemon creates: `<prefix>.>`, file storage, max age = the replay window. */
export function partitionStreamConfig(c: DeepReadonly<ScaleOutConfig>): {
  name: string; subjects: string[]; retention: RetentionPolicy; storage: StorageType; discard: DiscardPolicy; max_age: number; num_replicas: number;
} {
  return {
    name: c.stream,
    subjects: [`${c.subjectPrefix}.>`],
    retention: RetentionPolicy.Limits,
    storage: StorageType.File,
    discard: DiscardPolicy.Old,
    max_age: Math.round(c.replayWindowS * 1e9),
    num_replicas: 1,
  };
}

/**
 * Opens or creates the stream, bucket and store of the config; the owners bucket through
 * `ownersJsm` (a connection of its own in the node), the rest through `jsm`.
 */
export async function provisionJetStream(jsm: JetStreamManager, c: DeepReadonly<ScaleOutConfig>, ownersJsm: JetStreamManager = jsm): Promise<JetStreamPieces> {
  await ensureStream(jsm, c);
  const js = jsm.jetstream();
  const kvm = new Kvm(ownersJsm.jetstream());
  const objm = new Objm(js);
  try {
    const owners = c.provision ? await kvm.create(c.ownersBucket, { history: 1, storage: StorageType.File }) : await kvm.open(c.ownersBucket);
    const snapshots = c.provision ? await objm.create(c.snapshotsBucket, { storage: StorageType.File }) : await objm.open(c.snapshotsBucket);
    return { owners, snapshots };
  } catch (err) {
    if (!c.provision && isNotFound(err)) throw new ScaleOutSetupError(`bucket missing and scaleOut.provision is false: ${(err as Error).message}`);
    throw err;
  }
}
