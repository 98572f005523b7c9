/**
 * The application core: routes each message to its estimator, sensor and entity track, runs
 * the filter, publishes estimates through a port, evaluates health on a tick, and answers the
 * adapters' questions (EngineView). No I/O, no timers, no clock reads: the shell passes times in.
 */
import type { DeepReadonly } from '../config/deep-freeze.js';
import type { EstimatorConfig } from '../config/config-schema.js';
import type { Track } from '../estimation/track.js';
import { traceOf } from '../estimation/linalg/covariance-summary.js';
import { EngineEvents } from './engine-events.js';
import type { EngineCounters, EngineView, LatestEstimate, SensorSummary, TrackDetail, TrackSummary } from './engine-view.js';
import type { EstimateKind } from './estimate-message.js';
import { EstimateSnapshot } from './estimate-snapshot.js';
import { buildEstimatorRuntime, type EstimatorRuntime, type RuntimeSensor } from './estimator-runtime.js';
import type { HealthReason, HealthState } from './health-change.js';
import { HealthLatch, rawSensorHealth, rawTrackHealth, worseOf } from './health-evaluator.js';
import { entityKeyOf } from './topic-pattern.js';
import { TrackRegistry, type TrackRecord } from './track-registry.js';

/** Where estimates and health documents go (the MQTT adapter in the daemon). */
export interface EstimatePublisher {
  publish(topic: string, payload: string, qos: 0 | 1, retain: boolean): void;
}

/** One subscription the MQTT adapter must hold. */
export interface Subscription {
  readonly filter: string;
  readonly qos: 0 | 1 | 2;
}

interface Estimators {
  readonly runtime: EstimatorRuntime;
  readonly registry: TrackRegistry;
}

/** The engine; see the module comment. */
export class Engine implements EngineView {
  readonly events: EngineEvents;
  private estimators: Estimators[] = [];
  private received = 0;
  private accepted = 0;
  private produced = 0;
  private readonly scratch = new Float64Array(64);
  private readonly reasonScratch: HealthReason[] = [];
  private readonly trackReasonScratch: HealthReason[] = [];
  /**
   * The newest time the shell has passed in (a message's arrival or a health tick): queries
   * answer relative to it, so the engine never reads a clock of its own.
   */
  private lastNowMs = 0;

  /**
   * Builds every estimator from validated config (throws on a config the core cannot run).
   * A null publisher (offline tools) publishes nothing, so no payload text is made unless a
   * listener or latestEstimates reads it.
   */
  constructor(
    configs: readonly DeepReadonly<EstimatorConfig>[],
    private readonly publisher: EstimatePublisher | null,
    events?: EngineEvents,
  ) {
    // A reloaded engine takes over its predecessor's event bus, so subscribers stay attached.
    this.events = events ?? new EngineEvents();
    this.estimators = configs.map((c) => ({ runtime: buildEstimatorRuntime(c), registry: new TrackRegistry(c.entities.max) }));
  }

  /** The topic filters to subscribe to (deduplicated, highest QoS wins). */
  subscriptions(): Subscription[] {
    const byFilter = new Map<string, 0 | 1 | 2>();
    for (const { runtime } of this.estimators) {
      for (const s of runtime.sensors) {
        const q = byFilter.get(s.pattern.subscriptionFilter);
        byFilter.set(s.pattern.subscriptionFilter, q === undefined ? s.qos : (Math.max(q, s.qos) as 0 | 1 | 2));
      }
    }
    return [...byFilter].map(([filter, qos]) => ({ filter, qos }));
  }

  /**
   * Processes one message. Never throws: every outcome is an accepted measurement or a counted
   * rejection with a reason. arrivalMs is the shell's clock (used where a payload has no time
   * stamp and to refuse stamps from the future).
   */
  handleMessage(topic: string, payload: Uint8Array, arrivalMs: number): void {
    this.received += 1;
    if (arrivalMs > this.lastNowMs) this.lastNowMs = arrivalMs;
    let routed = false;
    for (let e = 0; e < this.estimators.length; e++) {
      const est = this.estimators[e]!;
      const sensors = est.runtime.sensors;
      for (let s = 0; s < sensors.length; s++) {
        const sensor = sensors[s]!;
        const captures = sensor.pattern.match(topic);
        if (captures === null) continue;
        routed = true;
        this.process(est, sensor, captures, topic, payload, arrivalMs);
      }
    }
    if (!routed) {
      this.events.emit('measurement:rejected', { estimator: '', sensor: '', entity: null, topic, reason: 'no-route', tS: Number.NaN, nis: Number.NaN, sequence: null, values: null });
    }
  }

  private process(est: Estimators, sensor: RuntimeSensor, captures: string[], topic: string, payload: Uint8Array, arrivalMs: number): void {
    const rt = est.runtime;
    const slot = sensor.slot;
    const arrivalS = arrivalMs / 1000;
    if (!sensor.decoder.decode(payload, arrivalS, slot)) {
      this.events.emit('measurement:rejected', {
        estimator: rt.name, sensor: sensor.name, entity: null, topic, reason: slot.reason ?? 'malformed', tS: Number.NaN, nis: Number.NaN, sequence: null, values: null,
      });
      return;
    }
    const entity = entityKeyOf(captures);
    let record = est.registry.get(entity);
    if (record === undefined) {
      record = est.registry.create(entity, captures, rt, arrivalMs);
      if (record === undefined) {
        this.events.emit('measurement:rejected', {
          estimator: rt.name, sensor: sensor.name, entity, topic, reason: 'entity-cap', tS: slot.timeS, nis: Number.NaN, sequence: slot.hasSequence ? slot.sequence : null, values: slot.values,
        });
        return;
      }
      this.events.emit('track:created', { estimator: rt.name, entity });
    }
    // Never moved back: after the host clock steps back and is corrected, a track that kept
    // reporting through the step must not look idle for the length of the step and be evicted.
    if (arrivalMs > record.lastSeenMs) record.lastSeenMs = arrivalMs;
    record.lastHeardMs[sensor.index] = arrivalMs;
    let R: Float64Array | null = null;
    if (slot.hasCovariance) {
      R = slot.covariance;
      if (sensor.adaptCovariance !== null && !sensor.adaptCovariance(slot, this.scratch)) R = null;
    }
    const track = record.track;
    const verdict = track.ingest(sensor.index, slot.values, R, slot.timeS, arrivalS);
    const sequence = slot.hasSequence ? slot.sequence : null;
    if (verdict === 'applied' || verdict === 'initialized' || verdict === 'late-applied') {
      this.accepted += 1;
      this.events.emit('measurement:accepted', {
        estimator: rt.name, sensor: sensor.name, entity, late: verdict === 'late-applied', latencyS: arrivalS - slot.timeS,
        tS: slot.timeS, nis: verdict === 'initialized' ? Number.NaN : track.stats[sensor.index]!.lastNis, values: slot.values, sequence,
      });
      if (rt.config.publish.mode === 'every-update') this.publishEstimate(est, record, 'filtered', track.tS);
      if (rt.smoothedTopic !== null) this.publishSmoothed(est, record);
    } else {
      this.events.emit('measurement:rejected', {
        estimator: rt.name, sensor: sensor.name, entity, topic, reason: verdict, tS: slot.timeS,
        nis: verdict === 'gate' ? track.stats[sensor.index]!.lastRejectedNis : Number.NaN, sequence, values: slot.values,
      });
    }
  }

  private publishEstimate(est: Estimators, record: TrackRecord, kind: EstimateKind, tS: number, x?: Float64Array, P?: Float64Array): void {
    const rt = est.runtime;
    const track = record.track;
    let snapshot = record.latest[kind];
    if (snapshot === undefined) {
      const topic = kind === 'smoothed' ? record.smoothedTopic! : record.estimateTopic;
      snapshot = new EstimateSnapshot(rt.serializer, rt.name, record.entity, kind, topic, track.x.length);
      record.latest[kind] = snapshot;
    }
    snapshot.capture(tS, x ?? track.x, P ?? track.P, track.coastS(tS), track.isStale(tS), record.trackHealth);
    this.produced += 1;
    if (this.publisher !== null) this.publisher.publish(snapshot.topic, snapshot.payload, rt.config.publish.qos, rt.config.publish.retain);
    if (this.events.has('estimate')) this.events.emit('estimate', snapshot);
  }

  private publishSmoothed(est: Estimators, record: TrackRecord): void {
    const n = record.track.x.length;
    const x = est.registry.smoothX(n);
    const P = est.registry.smoothP(n);
    const tS = record.track.smoothedInto(x, P);
    if (Number.isNaN(tS) || tS === record.lastSmoothedTimeS) return;
    record.lastSmoothedTimeS = tS;
    this.publishEstimate(est, record, 'smoothed', tS, x, P);
  }

  /** Publishes x̂(now|n) of every initialized track of fixed-rate estimators (call at their rate). */
  publishPredictions(estimator: string, nowMs: number): void {
    const est = this.find(estimator);
    if (est === undefined) return;
    const nowS = nowMs / 1000;
    const n = est.runtime.estimator.settings.process.dim;
    const x = est.registry.smoothX(n);
    const P = est.registry.smoothP(n);
    for (const record of est.registry.records()) {
      const track = record.track;
      if (!track.initialized) continue;
      const t = Math.max(nowS, track.tS);
      if (!track.predictInto(t, x, P)) continue;
      this.publishEstimate(est, record, 'predicted', t, x, P);
    }
  }

  /** One health tick: evaluates every track and sensor, publishing and emitting each transition. */
  evaluateHealth(nowMs: number): void {
    this.evaluateHealthSlice(nowMs, 0, 1);
  }

  /**
   * One slice of a health interval: evaluates the tracks whose fixed slot falls in `slice` of
   * `slices` (0 ≤ slice < slices). Calling slices 0…slices−1 once each per interval evaluates
   * every track exactly once, with the same hysteresis as evaluateHealth, while blocking for a
   * fraction of the time: at 10,000 tracks one full evaluation holds the event loop ~100 ms.
   */
  evaluateHealthSlice(nowMs: number, slice: number, slices: number): void {
    this.lastNowMs = nowMs;
    const nowS = nowMs / 1000;
    for (let e = 0; e < this.estimators.length; e++) {
      const est = this.estimators[e]!;
      for (const record of est.registry.records()) {
        if (slices === 1 || record.healthSlot % slices === slice) this.evaluateTrackHealth(est, record, nowS);
      }
    }
  }

  private evaluateTrackHealth(est: Estimators, record: TrackRecord, nowS: number): void {
    const t = est.runtime.health;
    const track = record.track;
    // Both scratch arrays are only read by the latches (which copy on change), so a track
    // whose health holds still allocates nothing here.
    const reasons = this.reasonScratch;
    const trackReasons = this.trackReasonScratch;
    trackReasons.length = 0;
    let worst: HealthState = 'ok';
    let changed = false;
    for (let s = 0; s < record.sensorHealth.length; s++) {
      reasons.length = 0;
      const raw = rawSensorHealth(track, s, nowS, t, reasons, record.lastHeardMs[s]! / 1000);
      const latch = record.sensorHealth[s]!;
      const from = latch.state;
      if (latch.feed(raw, reasons, t)) {
        changed = true;
        this.healthChanged(est, record, { sensor: est.runtime.sensors[s]!.name, from, to: latch.state, reasons: latch.reasons, tS: nowS });
      }
      worst = worseOf(worst, raw);
      mergeReasons(trackReasons, reasons);
    }
    reasons.length = 0;
    const numerics = track.counters.numericRefusals !== record.numericsSeen;
    record.numericsSeen = track.counters.numericRefusals;
    const rawTrack = worseOf(worst, rawTrackHealth(track, nowS, t, numerics, reasons));
    mergeReasons(trackReasons, reasons);
    const latch = record.trackLatch;
    const from = latch.state;
    if (latch.feed(rawTrack, trackReasons, t)) {
      changed = true;
      this.healthChanged(est, record, { sensor: null, from, to: latch.state, reasons: latch.reasons, tS: nowS });
    }
    if (latch.state !== record.trackHealth.state || latch.reasons !== record.trackHealth.reasons) {
      record.trackHealth = { state: latch.state, reasons: latch.reasons };
    }
    if (changed) this.publishHealth(est, record, nowS);
  }

  private healthChanged(
    est: Estimators, record: TrackRecord,
    change: { sensor: string | null; from: HealthState; to: HealthState; reasons: readonly HealthReason[]; tS: number },
  ): void {
    const event = { estimator: est.runtime.name, entity: record.entity, ...change };
    this.publisher?.publish(est.runtime.healthEventTopic, JSON.stringify(event), 1, false);
    this.events.emit('health:changed', event);
  }

  /** The retained per-entity health document: the track's state and each sensor's. */
  private publishHealth(est: Estimators, record: TrackRecord, nowS: number): void {
    if (this.publisher === null) return;
    const sensors: Record<string, { state: HealthState; reasons: readonly HealthReason[] }> = {};
    record.sensorHealth.forEach((l, i) => { sensors[est.runtime.sensors[i]!.name] = { state: l.state, reasons: l.reasons }; });
    const doc = { estimator: est.runtime.name, entity: record.entity, t: nowS, state: record.trackLatch.state, reasons: record.trackLatch.reasons, sensors };
    this.publisher.publish(record.healthTopic, JSON.stringify(doc), 1, true);
  }

  /** Drops tracks not heard from for their estimator's idle time; returns how many went. */
  evictIdle(nowMs: number): number {
    let count = 0;
    for (const est of this.estimators) {
      const limitMs = est.runtime.config.entities.idleEvictS * 1000;
      for (const entity of est.registry.idleSince(nowMs - limitMs)) {
        est.registry.delete(entity);
        this.events.emit('track:evicted', { estimator: est.runtime.name, entity, why: 'idle' });
        count += 1;
      }
    }
    return count;
  }

  /** Every estimator's tracks, for checkpoints. */
  tracks(): Map<string, Map<string, Track>> {
    const out = new Map<string, Map<string, Track>>();
    for (const est of this.estimators) out.set(est.runtime.name, est.registry.trackMap());
    return out;
  }

  /** The runtime of an estimator (for checkpoint restore and tools). */
  runtime(estimator: string): EstimatorRuntime | undefined {
    return this.find(estimator)?.runtime;
  }

  /** Installs a restored track for an entity (checkpoint restore); false when the cap is reached. */
  adoptTrack(estimator: string, entity: string, track: Track, nowMs: number): boolean {
    const est = this.find(estimator);
    if (est === undefined) return false;
    return est.registry.adopt(entity, entity.split('/'), est.runtime, track, nowMs);
  }

  estimatorNames(): readonly string[] {
    return this.estimators.map((e) => e.runtime.name);
  }

  trackCount(estimator: string): number {
    return this.find(estimator)?.registry.size ?? 0;
  }

  counters(): EngineCounters {
    return { received: this.received, accepted: this.accepted, estimatesProduced: this.produced };
  }

  *latestEstimates(): Iterable<LatestEstimate> {
    for (const est of this.estimators) {
      for (const record of est.registry.records()) {
        for (const kind of ['filtered', 'predicted', 'smoothed'] as const) {
          const latest = record.latest[kind];
          if (latest !== undefined) yield { estimator: est.runtime.name, entity: record.entity, kind, payload: latest.payload };
        }
      }
    }
  }

  listTracks(): TrackSummary[] {
    const out: TrackSummary[] = [];
    const nowS = this.lastNowMs / 1000;
    for (const est of this.estimators) for (const r of est.registry.records()) out.push(this.summary(est, r, nowS));
    return out;
  }

  trackDetail(estimator: string, entity: string): TrackDetail | null {
    const est = this.find(estimator);
    const record = est?.registry.get(entity);
    if (est === undefined || record === undefined) return null;
    const track = record.track;
    const n = track.x.length;
    const summary = this.summary(est, record, this.lastNowMs / 1000);
    const sensors: SensorSummary[] = track.stats.map((st, i) => {
      const rejected: Record<string, number> = {};
      for (const reason of ['gate', 'too-late', 'duplicate', 'future', 'numerics', 'not-initialized', 'malformed'] as const) {
        const c = st.rejectionCount(reason);
        if (c > 0) rejected[reason] = c;
      }
      return {
        name: est.runtime.sensors[i]!.name, accepted: st.accepted, late: st.late, rejected,
        lastNis: st.lastNis, windowedNisMean: st.windowedNisMean, windowFill: st.windowFill,
        nisBand: [st.nisBandLower, st.nisBandUpper], gateRejectionRate: st.gateRejectionRate,
        innovationRatio: Array.from(st.innovationRatio), lastTimeS: st.lastTimeS, health: record.sensorHealth[i]!.state,
      };
    });
    return {
      ...summary,
      stateNames: est.runtime.estimator.settings.process.stateNames,
      state: Array.from(track.x),
      sigma: Array.from({ length: n }, (_, i) => Math.sqrt(Math.max(0, track.P[i * n + i]!))),
      covariance: Array.from({ length: n }, (_, i) => Array.from(track.P.subarray(i * n, i * n + n))),
      sensors,
      counters: { ...track.counters },
    };
  }

  resetTrack(estimator: string, entity: string): boolean {
    const record = this.find(estimator)?.registry.get(entity);
    if (record === undefined) return false;
    record.track.reset(this.lastNowMs / 1000);
    record.latest = {};
    this.events.emit('track:evicted', { estimator, entity, why: 'reset' });
    return true;
  }

  private summary(est: Estimators, r: TrackRecord, nowS: number): TrackSummary {
    const track = r.track;
    return {
      estimator: est.runtime.name,
      entity: r.entity,
      initialized: track.initialized,
      tS: track.tS,
      coastS: track.coastS(nowS),
      stale: track.isStale(nowS),
      traceP: traceOf(track.P, track.x.length),
      health: r.trackHealth,
    };
  }

  private find(name: string): Estimators | undefined {
    return this.estimators.find((e) => e.runtime.name === name);
  }
}

/** Appends to `into` each reason of `from` not already in it (order of first appearance). */
function mergeReasons(into: HealthReason[], from: readonly HealthReason[]): void {
  for (let i = 0; i < from.length; i++) if (!into.includes(from[i]!)) into.push(from[i]!);
}

export { HealthLatch };
