/**
 * The engine's tracks seen per partition: which tracks a partition's snapshot holds, installing
 * a restored snapshot, and dropping the tracks of partitions this replica no longer owns. The
 * engine keeps all of a replica's partitions in one registry; the entity key says the partition.
 */
import type { Engine } from '../../engine/engine.js';
import type { EngineHandle } from '../../engine/engine-handle.js';
import type { Estimator } from '../../estimation/estimator.js';
import type { Track } from '../../estimation/track.js';
import { restoreFromDocument, type CheckpointDocument, type SkippedTrack } from '../checkpoint/checkpoint-document.js';
import { partitionOfEntity } from './fnv1a-partition.js';

/** Tracks by estimator, then entity. */
export type TrackSet = Map<string, Map<string, Track>>;

/** Installs a snapshot's tracks; returns how many were adopted and which were skipped. */
export function adoptCheckpoint(engine: Engine, doc: CheckpointDocument, nowMs: number): { adopted: number; skipped: SkippedTrack[] } {
  const estimators = new Map<string, Estimator>();
  for (const name of engine.estimatorNames()) estimators.set(name, engine.runtime(name)!.estimator);
  const summary = restoreFromDocument(doc, estimators);
  const skipped = [...summary.skipped];
  let adopted = 0;
  for (const [name, byEntity] of summary.tracks) {
    for (const [entity, track] of byEntity) {
      if (engine.adoptTrack(name, entity, track, nowMs)) adopted += 1;
      else skipped.push({ estimator: name, entity, reason: 'the estimator is at its entity cap' });
    }
  }
  return { adopted, skipped };
}

/**
 * Replaces the engine with a fresh one (from `makeEngine`, sharing the event bus) that holds
 * every track except those of the `dropped` partitions; the tracks move, they are not copied.
 * Returns the number of tracks dropped. Rare (a lost partition), so O(tracks) is fine.
 */
export function dropPartitions(handle: EngineHandle, makeEngine: () => Engine, dropped: ReadonlySet<number>, partitions: number, nowMs: number): number {
  const next = makeEngine();
  let count = 0;
  for (const [estimator, byEntity] of handle.engine.tracks()) {
    for (const [entity, track] of byEntity) {
      if (dropped.has(partitionOfEntity(entity, partitions))) count += 1;
      else next.adoptTrack(estimator, entity, track, nowMs);
    }
  }
  handle.swap(next);
  return count;
}

/** The tracks of one partition (a pass over every track: fine once per snapshot). */
export function tracksOfPartition(engine: Engine, partition: number, partitions: number): TrackSet {
  const out: TrackSet = new Map();
  for (const [estimator, byEntity] of engine.tracks()) {
    const mine = new Map<string, Track>();
    for (const [entity, track] of byEntity) if (partitionOfEntity(entity, partitions) === partition) mine.set(entity, track);
    if (mine.size > 0) out.set(estimator, mine);
  }
  return out;
}
