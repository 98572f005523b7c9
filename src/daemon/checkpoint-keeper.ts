/**
 * Keeps the daemon's tracks on disk: restores them at start, writes them periodically and at
 * shutdown, and carries them across config reloads. A failed write is logged loudly and
 * estimation goes on; a bad checkpoint file is set aside by the store and start-up goes on.
 */
import type { Logger } from 'pino';
import type { Config } from '../config/config-schema.js';
import type { DeepReadonly } from '../config/deep-freeze.js';
import type { Engine } from '../engine/engine.js';
import type { EngineHandle } from '../engine/engine-handle.js';
import type { Estimator } from '../estimation/estimator.js';
import { createCheckpointStore, type CheckpointStore } from '../adapters/checkpoint/checkpoint-store.js';
import { checkpointDocument, restoreFromDocument } from '../adapters/checkpoint/checkpoint-document.js';
import { configFingerprint } from '../adapters/checkpoint/config-fingerprint.js';
import { encodeCheckpointInSlices } from '../adapters/checkpoint/sliced-checkpoint-encoder.js';
import { modelStateNames } from '../config/model-schema.js';
import { measurementDimension } from '../config/measurement-schema.js';

/**
 * What must match for a stored track to fit: state names, sensors and their dimensions, and
 * the buffer sizes. Tuning a noise value or a gate keeps the checkpoint; changing a model's
 * shape does not (the restore would then skip those tracks anyway).
 */
export function structuralFingerprint(config: DeepReadonly<Config>): string {
  return configFingerprint(config.estimators.map((e) => ({
    name: e.name,
    states: modelStateNames(e.model),
    sensors: Object.entries(e.sensors).map(([name, s]) => [name, measurementDimension(s.measurement).dim]),
    maxEntries: e.history.maxEntries,
    lagSteps: e.smoothing.lagSteps,
    windowN: e.health.windowN,
  })));
}

/** See the module comment. */
export class CheckpointKeeper {
  private store: CheckpointStore | null;
  private timer: NodeJS.Timeout | null = null;
  private saving: Promise<void> | null = null;

  /** Prepares the store for the config's checkpoint directory (nothing is read yet). */
  constructor(private config: DeepReadonly<Config>, private readonly handle: EngineHandle, private readonly log: Logger, private readonly now: () => number) {
    this.store = this.makeStore(config);
  }

  private makeStore(config: DeepReadonly<Config>): CheckpointStore | null {
    if (!config.checkpoint.enabled) return null;
    return createCheckpointStore({ directory: config.checkpoint.directory, configFingerprint: structuralFingerprint(config), logger: this.log });
  }

  /** Adopts a new config (reload): later checkpoints carry its fingerprint. */
  setConfig(config: DeepReadonly<Config>): void {
    this.config = config;
    this.store = this.makeStore(config);
  }

  /** Loads the checkpoint into the current engine; returns the number of tracks restored. */
  async restore(): Promise<number> {
    if (this.store === null) return 0;
    const loaded = await this.store.load();
    if (loaded.kind === 'none') return 0;
    // The store has already warned, with the file, the problem and where it was moved.
    if (loaded.kind === 'rejected') return 0;
    const engine = this.handle.engine;
    const summary = restoreFromDocument(loaded.doc, estimatorMap(engine));
    for (const s of summary.skipped) this.log.warn(s, 'checkpointed track not restored');
    let adopted = 0;
    for (const [name, byEntity] of summary.tracks) {
      for (const [entity, track] of byEntity) if (engine.adoptTrack(name, entity, track, this.now())) adopted += 1;
    }
    return adopted;
  }

  /** Moves every track that fits from one engine to the next (config reload). */
  transfer(from: Engine, to: Engine): { kept: number; dropped: number } {
    const doc = checkpointDocument(from.tracks(), 'reload');
    const summary = restoreFromDocument(doc, estimatorMap(to));
    let kept = 0;
    for (const [name, byEntity] of summary.tracks) {
      for (const [entity, track] of byEntity) if (to.adoptTrack(name, entity, track, this.now())) kept += 1;
    }
    return { kept, dropped: summary.skipped.length };
  }

  /** Writes every interval until stopPeriodic. */
  startPeriodic(): void {
    if (this.store === null || this.timer !== null) return;
    this.timer = setInterval(() => void this.saveNow('periodic'), this.config.checkpoint.intervalS * 1000);
    this.timer.unref();
  }

  /** Stops the periodic writes. */
  stopPeriodic(): void {
    if (this.timer !== null) clearInterval(this.timer);
    this.timer = null;
  }

  /** Writes a checkpoint now (skipped while one is still being written); never rejects. */
  async saveNow(why: 'periodic' | 'shutdown'): Promise<void> {
    const store = this.store;
    if (store === null) return;
    if (this.saving !== null) {
      await this.saving;
      if (why === 'periodic') return;
    }
    // Encoded in slices between event-loop turns: at 10,000 tracks one synchronous pass held
    // the loop for seconds (see sliced-checkpoint-encoder.ts).
    this.saving = encodeCheckpointInSlices(this.handle.engine.tracks(), structuralFingerprint(this.config))
      .then((bytes) => store.saveEncoded(bytes))
      .then(
        () => this.log.debug({ why }, 'checkpoint written'),
        (err: unknown) => this.log.error({ err, why }, 'CHECKPOINT WRITE FAILED: estimation goes on, but a restart would cold-start the filters'),
      )
      .finally(() => { this.saving = null; });
    await this.saving;
  }
}

function estimatorMap(engine: Engine): Map<string, Estimator> {
  const out = new Map<string, Estimator>();
  for (const name of engine.estimatorNames()) out.set(name, engine.runtime(name)!.estimator);
  return out;
}
