/**
 * The checkpoint document: every estimator's tracks by entity, with the format name, version,
 * time of writing and configuration fingerprint that tell a reader whether it may restore them.
 * Building it and restoring from it are here; putting it on disk is checkpoint-store.ts.
 */
import type { Estimator } from '../../estimation/estimator.js';
import type { Track } from '../../estimation/track.js';
import { restoreTrack, trackToCheckpoint, type TrackCheckpoint } from '../../estimation/track-checkpoint.js';

/** The value of the document's `format` field. */
export const CHECKPOINT_FORMAT = 'statecast-checkpoint';

/** The document version this code writes and reads. */
export const CHECKPOINT_VERSION = 1;

/** One checkpoint: tracks by estimator name, then by entity id. */
export interface CheckpointDocument {
  readonly format: typeof CHECKPOINT_FORMAT;
  readonly version: typeof CHECKPOINT_VERSION;
  /** When the document was built, ISO 8601 UTC. */
  readonly writtenAt: string;
  /** configFingerprint() of the estimators' configuration the tracks were kept under. */
  readonly configFingerprint: string;
  readonly estimators: Readonly<Record<string, Readonly<Record<string, TrackCheckpoint>>>>;
}

/** Why a checkpoint file was set aside: a closed set, usable as a metric label. */
export type CheckpointProblem = 'unreadable' | 'truncated' | 'checksum' | 'not-json' | 'format' | 'version' | 'fingerprint' | 'shape';

/** A document check that failed: the problem and words for the operator. */
export interface DocumentIssue {
  readonly problem: CheckpointProblem;
  readonly reason: string;
}

/** A track left out of a restore, and why. */
export interface SkippedTrack {
  readonly estimator: string;
  readonly entity: string;
  readonly reason: string;
}

/** What restoreFromDocument did. */
export interface RestoreSummary {
  /** Tracks restored (the number of entries in `tracks`). */
  readonly restored: number;
  /** Tracks not restored: unknown estimator, or a checkpoint that does not fit. */
  readonly skipped: readonly SkippedTrack[];
  /** The restored tracks by estimator name, then entity id. */
  readonly tracks: Map<string, Map<string, Track>>;
}

/**
 * The document for the given tracks (estimator name → entity id → track). Allocates a copy of
 * every track's state: build it when checkpointing, not per measurement. `writtenAt` defaults
 * to now.
 */
export function checkpointDocument(
  estimators: ReadonlyMap<string, ReadonlyMap<string, Track>>,
  fingerprint: string,
  writtenAt: Date = new Date(),
): CheckpointDocument {
  // Object.fromEntries defines own properties, so an entity called `__proto__` stays an entity.
  const byEstimator = Object.fromEntries(
    Array.from(estimators, ([name, tracks]) => [name, Object.fromEntries(Array.from(tracks, ([entity, t]) => [entity, trackToCheckpoint(t)]))]),
  );
  return {
    format: CHECKPOINT_FORMAT,
    version: CHECKPOINT_VERSION,
    writtenAt: writtenAt.toISOString(),
    configFingerprint: fingerprint,
    estimators: byEstimator,
  };
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function described(v: unknown): string {
  if (typeof v === 'string') return JSON.stringify(v.length > 80 ? `${v.slice(0, 80)}…` : v);
  if (typeof v === 'number' || typeof v === 'boolean' || v === null) return String(v);
  return v === undefined ? 'nothing' : `a ${Array.isArray(v) ? 'array' : typeof v}`;
}

/**
 * Checks a parsed document's envelope: format, version, time, fingerprint (against
 * `expectedFingerprint`) and that `estimators` maps names to objects. The tracks themselves
 * are checked one by one when restored, so one bad track costs only that track.
 */
export function checkDocument(value: unknown, expectedFingerprint: string): CheckpointDocument | DocumentIssue {
  if (!isRecord(value)) return { problem: 'format', reason: `the document is ${described(value)}, not an object` };
  if (value['format'] !== CHECKPOINT_FORMAT) {
    return { problem: 'format', reason: `format must be "${CHECKPOINT_FORMAT}", got ${described(value['format'])}` };
  }
  if (value['version'] !== CHECKPOINT_VERSION) {
    return { problem: 'version', reason: `version must be ${CHECKPOINT_VERSION}, got ${described(value['version'])}` };
  }
  const writtenAt = value['writtenAt'];
  if (typeof writtenAt !== 'string' || Number.isNaN(Date.parse(writtenAt))) {
    return { problem: 'shape', reason: `writtenAt must be an ISO 8601 time, got ${described(writtenAt)}` };
  }
  const fingerprint = value['configFingerprint'];
  if (fingerprint !== expectedFingerprint) {
    return {
      problem: 'fingerprint',
      reason: `configFingerprint ${described(fingerprint)} differs from the running configuration's "${expectedFingerprint}": the tracks were kept under another estimator configuration`,
    };
  }
  const estimators = value['estimators'];
  if (!isRecord(estimators)) return { problem: 'shape', reason: `estimators must be an object, got ${described(estimators)}` };
  for (const [name, entities] of Object.entries(estimators)) {
    if (!isRecord(entities)) return { problem: 'shape', reason: `estimators[${JSON.stringify(name)}] must be an object, got ${described(entities)}` };
  }
  return value as unknown as CheckpointDocument;
}

/** True when a check (checkDocument, decodeCheckpointFile) found a problem. */
export function isDocumentIssue<T extends object>(v: T | DocumentIssue): v is DocumentIssue {
  return 'problem' in v;
}

/**
 * Rebuilds the tracks of a document for the estimators given by name. A track of an unknown
 * estimator, or one whose checkpoint does not fit its estimator, is skipped with a reason;
 * nothing here throws for bad data, so one bad track never costs the others.
 */
export function restoreFromDocument(doc: CheckpointDocument, estimatorsByName: ReadonlyMap<string, Estimator>): RestoreSummary {
  const tracks = new Map<string, Map<string, Track>>();
  const skipped: SkippedTrack[] = [];
  let restored = 0;
  for (const [name, entities] of Object.entries(doc.estimators as Record<string, unknown>)) {
    const estimator = estimatorsByName.get(name);
    if (!isRecord(entities)) {
      skipped.push({ estimator: name, entity: '*', reason: `estimators[${JSON.stringify(name)}] is not an object` });
      continue;
    }
    for (const [entity, checkpoint] of Object.entries(entities)) {
      if (estimator === undefined) {
        skipped.push({ estimator: name, entity, reason: `no estimator named ${JSON.stringify(name)} in the running configuration` });
        continue;
      }
      const result = restoreTrack(estimator, checkpoint);
      if (!result.ok) {
        skipped.push({ estimator: name, entity, reason: result.reason });
        continue;
      }
      let byEntity = tracks.get(name);
      if (byEntity === undefined) tracks.set(name, (byEntity = new Map()));
      byEntity.set(entity, result.track);
      restored += 1;
    }
  }
  return { restored, skipped, tracks };
}
