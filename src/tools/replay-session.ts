/**
 * One replay: recorded messages go through the daemon's own Engine (decode, routing, tracks,
 * gating, late data, health) with the recording's arrival time as the clock, and the engine's
 * events become output lines and summary counts. Ground-truth topics (`sim/truth/...`) never
 * reach the engine (the daemon does not subscribe to them); they score the tracks instead.
 * No wall clock is read anywhere, so the same input gives the same output bytes.
 */
import type { DeepReadonly } from '../config/deep-freeze.js';
import type { EstimatorConfig } from '../config/config-schema.js';
import { Engine } from '../engine/engine.js';
import type { EngineEventMap } from '../engine/engine-events.js';
import { smoothLog } from './batch-smoother.js';
import { pushEstimate } from './report-series.js';
import type { ReplaySummary } from './replay-summary.js';
import { RecordingTicker, type TickJob } from './recording-ticker.js';
import { EstimatorReplay, type EntityReplay } from './estimator-replay.js';
import type { ByteBlockWriter } from './byte-block-writer.js';

/** Settings of a replay. */
export interface ReplaySessionOptions {
  readonly estimators: readonly DeepReadonly<EstimatorConfig>[];
  /** Recording seconds between health evaluations (the daemon's is 1). */
  readonly healthIntervalS: number;
  /** Where output lines go; null to make none (a report needs only the summary and series). */
  readonly output: ByteBlockWriter | null;
  /** Keep each entity's accepted measurements and run the batch RTS smoother in finish(). */
  readonly smooth: boolean;
  /** Keep report series for at most this many entities (0: none). */
  readonly reportEntities: number;
}

const TRUTH_PREFIX = 'sim/truth/';
/** The daemon evicts idle tracks every 30 s (src/app.ts). */
const EVICT_PERIOD_MS = 30_000;
const KIND_OF: Readonly<Record<string, string>> = { filtered: 'filtered', predicted: 'predicted', smoothed: 'lag-smoothed' };

/** A replay in progress; feed it with handle(), then call finish(). */
export class ReplaySession {
  readonly engine: Engine;
  readonly estimators: EstimatorReplay[];
  private readonly byName = new Map<string, EstimatorReplay>();
  private readonly ticker: RecordingTicker;
  private messages = 0;
  private truthMessages = 0;
  private unrouted = 0;
  private firstMs: number | null = null;
  private lastMs: number | null = null;
  private arrivalS = Number.NaN;
  private seriesLeft: number;

  /** Builds the engine and subscribes to its events (throws on a config the core cannot run). */
  constructor(private readonly options: ReplaySessionOptions) {
    this.engine = new Engine(options.estimators, null);
    this.seriesLeft = options.reportEntities;
    this.estimators = options.estimators.map((c) => new EstimatorReplay(this.engine.runtime(c.name)!));
    for (const e of this.estimators) this.byName.set(e.name, e);
    const jobs: TickJob[] = [
      { periodMs: options.healthIntervalS * 1000, run: (t) => this.engine.evaluateHealth(t) },
      { periodMs: EVICT_PERIOD_MS, run: (t) => this.engine.evictIdle(t) },
    ];
    for (const c of options.estimators) {
      const rateHz = c.publish.rateHz;
      if (c.publish.mode === 'fixed-rate' && rateHz !== undefined) {
        jobs.push({ periodMs: 1000 / rateHz, run: (t) => this.engine.publishPredictions(c.name, t) });
      }
    }
    this.ticker = new RecordingTicker(jobs);
    const ev = this.engine.events;
    ev.on('track:created', (e) => this.onCreated(e));
    ev.on('track:evicted', (e) => this.byName.get(e.estimator)?.forgetTrack(e.entity));
    ev.on('measurement:accepted', (e) => this.onAccepted(e));
    ev.on('measurement:rejected', (e) => this.onRejected(e));
    ev.on('estimate', (e) => this.onEstimate(e));
    ev.on('health:changed', (e) => {
      const est = this.byName.get(e.estimator);
      if (est !== undefined) est.healthChanges += 1;
    });
  }

  /** Processes one recorded message (payload only read during the call). */
  handle(tMs: number, topic: string, payload: Uint8Array): void {
    this.messages += 1;
    this.firstMs ??= tMs;
    this.lastMs = tMs;
    this.arrivalS = tMs / 1000;
    this.ticker.advance(tMs);
    if (topic.startsWith(TRUTH_PREFIX)) this.onTruth(topic, payload);
    else this.engine.handleMessage(topic, payload, tMs);
  }

  /**
   * Ends the replay: unless interrupted, runs the batch smoother (writing `smoothed` lines per
   * entity, entities in name order) and returns the summary.
   */
  finish(interrupted: boolean, signal?: AbortSignal): ReplaySummary {
    let stopped = interrupted;
    if (this.options.smooth && !stopped) {
      for (const est of this.estimators) {
        for (const entity of [...est.entities.values()].sort((a, b) => (a.entity < b.entity ? -1 : a.entity > b.entity ? 1 : 0))) {
          if (signal?.aborted === true) {
            stopped = true;
            break;
          }
          this.writeSmoothed(est, entity);
        }
      }
    }
    return {
      messages: this.messages,
      truthMessages: this.truthMessages,
      unrouted: this.unrouted,
      firstMs: this.firstMs,
      lastMs: this.lastMs,
      interrupted: stopped,
      estimators: this.estimators.map((e) => e.summary()),
    };
  }

  private writeSmoothed(est: EstimatorReplay, entity: EntityReplay): void {
    if (entity.log === null) return;
    const run = smoothLog(est.runtime.estimator, entity.log);
    est.refilterRefusals += run.refused;
    const out = this.options.output;
    for (const step of run.steps) {
      if (out !== null) est.formatter.write(out, step.tS, entity.entityJson, 'smoothed', step.x, step.P, null);
      if (entity.series !== null) pushEstimate(entity.series.smoothedT, entity.series.smoothedX, entity.series.smoothedSigma, step.tS, step.x, step.P);
    }
  }

  private onCreated(e: EngineEventMap['track:created']): void {
    const est = this.byName.get(e.estimator);
    if (est === undefined) return;
    const track = this.engine.tracks().get(e.estimator)?.get(e.entity);
    const collect = this.seriesLeft > 0 && !est.entities.has(e.entity);
    if (collect) this.seriesLeft -= 1;
    est.adopt(e.entity, track, this.options.smooth, collect);
  }

  private onAccepted(e: EngineEventMap['measurement:accepted']): void {
    const est = this.byName.get(e.estimator);
    const entity = est?.entities.get(e.entity);
    if (est === undefined || entity === undefined) return;
    const sensor = est.sensorByName.get(e.sensor)!;
    sensor.accepted += 1;
    if (e.late) sensor.late += 1;
    const s = sensor.index;
    if (Number.isFinite(e.nis)) {
      entity.nisSum[s] = entity.nisSum[s]! + e.nis;
      entity.nisCount[s] = entity.nisCount[s]! + 1;
      if (entity.nisCount[s] === sensor.windowN) {
        sensor.scoreWindow(entity.nisSum[s]! / sensor.windowN);
        entity.nisSum[s] = 0;
        entity.nisCount[s] = 0;
      }
    }
    if (this.options.output !== null) entity.pendingNis.add(sensor.nisFragment, e.tS, e.nis);
    if (entity.log !== null || entity.series !== null) est.recordAccepted(entity, s, e.tS, e.nis, e.values);
  }

  private onRejected(e: EngineEventMap['measurement:rejected']): void {
    const est = this.byName.get(e.estimator);
    if (est === undefined) {
      this.unrouted += 1;
      return;
    }
    const sensor = est.sensorByName.get(e.sensor);
    sensor?.reject(e.reason);
    const series = e.entity === null ? null : (est.entities.get(e.entity)?.series ?? null);
    if (series !== null && sensor !== undefined) {
      series.rejectedT.push(Number.isFinite(e.tS) ? e.tS : this.arrivalS);
      series.rejectedSensor.push(sensor.index);
      series.rejectedReason.push(est.reasonIndex(e.reason));
    }
  }

  private onEstimate(e: EngineEventMap['estimate']): void {
    const est = this.byName.get(e.estimator);
    const entity = est?.entities.get(e.entity);
    const track = entity?.track;
    if (est === undefined || entity === undefined || track === undefined) return;
    let x = track.x;
    let P = track.P;
    if (e.kind === 'predicted' || e.kind === 'smoothed') {
      // Recomputed exactly as the engine did (same core call, same inputs): its scratch is private.
      x = est.x;
      P = est.P;
      if (e.kind === 'predicted') track.predictInto(e.tS, x, P);
      else track.smoothedInto(x, P);
    }
    est.estimates += 1;
    const out = this.options.output;
    if (out !== null) est.formatter.write(out, e.tS, entity.entityJson, KIND_OF[e.kind] ?? e.kind, x, P, entity.pendingNis);
    if (e.kind === 'filtered' && entity.series !== null) {
      pushEstimate(entity.series.filteredT, entity.series.filteredX, entity.series.filteredSigma, e.tS, x, P);
    }
  }

  private onTruth(topic: string, payload: Uint8Array): void {
    this.truthMessages += 1;
    // sim/truth/{scenario}/{entity…}: the entity key is everything after the scenario level.
    const rest = topic.slice(TRUTH_PREFIX.length);
    const slash = rest.indexOf('/');
    if (slash < 0) return;
    const entityKey = rest.slice(slash + 1);
    let truth: unknown;
    try {
      truth = JSON.parse(Buffer.from(payload.buffer, payload.byteOffset, payload.byteLength).toString('utf8'));
    } catch {
      return;
    }
    if (typeof truth !== 'object' || truth === null) return;
    const fields = truth as Record<string, unknown>;
    const tS = fields['t'];
    if (typeof tS !== 'number' || !Number.isFinite(tS)) return;
    for (const est of this.estimators) {
      const entity = est.entities.get(entityKey);
      if (entity !== undefined) est.scoreTruth(entity, tS, fields);
    }
  }
}
