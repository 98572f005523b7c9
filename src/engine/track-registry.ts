/**
 * One estimator's tracks, keyed by entity, with a hard cap (a flood of new topics is refused,
 * so memory never grows without bound) and idle eviction.
 */
import type { Track } from '../estimation/track.js';
import type { EstimateKind } from './estimate-message.js';
import type { EstimateSnapshot } from './estimate-snapshot.js';
import type { EstimatorRuntime } from './estimator-runtime.js';
import type { HealthSummary } from './health-change.js';
import { HealthLatch } from './health-evaluator.js';

/** A track with what the engine keeps beside it. */
export interface TrackRecord {
  readonly entity: string;
  readonly captures: readonly string[];
  readonly track: Track;
  readonly estimateTopic: string;
  readonly smoothedTopic: string | null;
  readonly healthTopic: string;
  lastSeenMs: number;
  lastSmoothedTimeS: number;
  /** Newest estimate per kind (for WebSocket snapshots), reused for the next one of that kind. */
  latest: Partial<Record<EstimateKind, EstimateSnapshot>>;
  readonly trackLatch: HealthLatch;
  readonly sensorHealth: HealthLatch[];
  trackHealth: HealthSummary;
  /** numericRefusals already reported to health. */
  numericsSeen: number;
  /** Per sensor, when a decodable message for this entity last arrived (epoch ms; creation time at first). */
  readonly lastHeardMs: Float64Array;
  /**
   * Creation order, fixed for the record's life: a sliced health tick evaluates the records
   * whose healthSlot modulo the slice count matches, so each is evaluated once per interval.
   */
  readonly healthSlot: number;
}

const OK: HealthSummary = Object.freeze({ state: 'ok', reasons: Object.freeze([]) as readonly never[] });

/** The tracks of one estimator. */
export class TrackRegistry {
  private readonly byEntity = new Map<string, TrackRecord>();
  private readonly scratch = new Map<number, { x: Float64Array; P: Float64Array }>();
  private nextHealthSlot = 0;

  /** Creates an empty registry holding at most maxTracks tracks. */
  constructor(readonly maxTracks: number) {}

  /** Number of tracks held. */
  get size(): number {
    return this.byEntity.size;
  }

  /** The record of an entity, if any. */
  get(entity: string): TrackRecord | undefined {
    return this.byEntity.get(entity);
  }

  /** A new record for an entity; undefined when the cap is reached. */
  create(entity: string, captures: readonly string[], rt: EstimatorRuntime, nowMs: number): TrackRecord | undefined {
    return this.install(entity, captures, rt, rt.estimator.createTrack(), nowMs);
  }

  /** Installs an existing (restored) track; false when the cap is reached. */
  adopt(entity: string, captures: readonly string[], rt: EstimatorRuntime, track: Track, nowMs: number): boolean {
    return this.install(entity, captures, rt, track, nowMs) !== undefined;
  }

  private install(entity: string, captures: readonly string[], rt: EstimatorRuntime, track: Track, nowMs: number): TrackRecord | undefined {
    if (!this.byEntity.has(entity) && this.byEntity.size >= this.maxTracks) return undefined;
    const record: TrackRecord = {
      entity,
      captures,
      track,
      estimateTopic: rt.estimateTopic(entity, captures),
      smoothedTopic: rt.smoothedTopic === null ? null : rt.smoothedTopic(entity, captures),
      healthTopic: rt.healthTopic(entity, captures),
      lastSeenMs: nowMs,
      lastSmoothedTimeS: Number.NaN,
      latest: {},
      trackLatch: new HealthLatch(),
      sensorHealth: rt.sensors.map(() => new HealthLatch()),
      trackHealth: OK,
      numericsSeen: track.counters.numericRefusals,
      lastHeardMs: new Float64Array(rt.sensors.length).fill(nowMs),
      healthSlot: this.nextHealthSlot++,
    };
    this.byEntity.set(entity, record);
    return record;
  }

  /** Removes an entity's track. */
  delete(entity: string): boolean {
    return this.byEntity.delete(entity);
  }

  /** Every record (live view; do not delete while iterating — use idleSince first). */
  records(): IterableIterator<TrackRecord> {
    return this.byEntity.values();
  }

  /** Entities last seen before cutoffMs. */
  idleSince(cutoffMs: number): string[] {
    const out: string[] = [];
    for (const r of this.byEntity.values()) if (r.lastSeenMs < cutoffMs) out.push(r.entity);
    return out;
  }

  /** Entity → track, for checkpoints. */
  trackMap(): Map<string, Track> {
    const out = new Map<string, Track>();
    for (const r of this.byEntity.values()) out.set(r.entity, r.track);
    return out;
  }

  /** Reusable buffers for predicted or smoothed estimates of n states. */
  smoothX(n: number): Float64Array {
    return this.buffers(n).x;
  }

  /** See smoothX. */
  smoothP(n: number): Float64Array {
    return this.buffers(n).P;
  }

  private buffers(n: number): { x: Float64Array; P: Float64Array } {
    let b = this.scratch.get(n);
    if (b === undefined) {
      b = { x: new Float64Array(n), P: new Float64Array(n * n) };
      this.scratch.set(n, b);
    }
    return b;
  }
}
