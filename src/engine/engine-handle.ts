import type { Engine } from './engine.js';
import type { EngineEvents } from './engine-events.js';
import type { EngineCounters, EngineView, LatestEstimate, TrackDetail, TrackSummary } from './engine-view.js';

/**
 * The EngineView the adapters hold across config reloads: it forwards to whichever engine is
 * current. Reloads swap the engine between two messages (everything runs on one thread), so a
 * request never sees half of each.
 */
export class EngineHandle implements EngineView {
  /** Wraps the first engine. */
  constructor(private current: Engine) {}

  /** The engine now in charge. */
  get engine(): Engine {
    return this.current;
  }

  /** Makes `next` current; it must share the event bus of the one it replaces. */
  swap(next: Engine): void {
    if (next.events !== this.current.events) throw new Error('a reloaded engine must reuse the event bus');
    this.current = next;
  }

  get events(): EngineEvents {
    return this.current.events;
  }

  estimatorNames(): readonly string[] {
    return this.current.estimatorNames();
  }

  listTracks(): TrackSummary[] {
    return this.current.listTracks();
  }

  trackDetail(estimator: string, entity: string): TrackDetail | null {
    return this.current.trackDetail(estimator, entity);
  }

  resetTrack(estimator: string, entity: string): boolean {
    return this.current.resetTrack(estimator, entity);
  }

  latestEstimates(): Iterable<LatestEstimate> {
    return this.current.latestEstimates();
  }

  trackCount(estimator: string): number {
    return this.current.trackCount(estimator);
  }

  counters(): EngineCounters {
    return this.current.counters();
  }
}
