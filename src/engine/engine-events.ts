/**
 * The engine's typed events. Observability (metrics, logs, WebSocket pushes) subscribes in the
 * shell; the engine only emits. `emit` cannot throw: a failing listener is reported through
 * `listener:error` and never breaks measurement processing.
 */
import type { RejectionReason } from '../estimation/health-stats.js';
import type { DecodeRejection } from './decode-rejection.js';
import type { EstimateKind } from './estimate-message.js';
import type { HealthChange } from './health-change.js';

/** Every event name and its payload. */
export interface EngineEventMap {
  /**
   * An estimate was produced: `payload` is the JSON published on MQTT and pushed on WebSocket
   * (made on first read). The engine reuses the object for the entity's next estimate of the
   * same kind: read it during the call.
   */
  'estimate': { estimator: string; entity: string; kind: EstimateKind; topic: string; payload: string; tS: number };
  /**
   * A measurement was applied. `values` is the decoder's reused slot (copy it to keep it);
   * `nis` is NaN for the measurement that initialized the track; `latencyS` is processing time
   * minus event time (late data makes it large, by design).
   */
  'measurement:accepted': {
    estimator: string; sensor: string; entity: string; late: boolean; latencyS: number;
    tS: number; nis: number; values: Float64Array; sequence: number | null;
  };
  /** A message or measurement was refused; `tS` and `nis` are NaN where unknown. */
  'measurement:rejected': {
    estimator: string; sensor: string; entity: string | null; topic: string;
    reason: RejectionReason | DecodeRejection | 'no-route' | 'entity-cap' | 'bad-topic';
    tS: number; nis: number; sequence: number | null;
    /** The decoded values (reused buffer: copy to keep) when decoding succeeded, else null. */
    values: Float64Array | null;
  };
  'track:created': { estimator: string; entity: string };
  'track:evicted': { estimator: string; entity: string; why: 'idle' | 'reset' };
  'health:changed': HealthChange;
  'listener:error': { event: string; error: unknown };
}

/** Name of an engine event. */
export type EngineEventName = keyof EngineEventMap;

/** A listener for one event. */
export type EngineListener<K extends EngineEventName> = (payload: EngineEventMap[K]) => void;

/** Minimal typed emitter; listeners run synchronously in registration order. */
export class EngineEvents {
  private readonly listeners: { [K in EngineEventName]?: EngineListener<K>[] } = {};

  /** Subscribes; returns a function that unsubscribes. */
  on<K extends EngineEventName>(event: K, listener: EngineListener<K>): () => void {
    const list = (this.listeners[event] ??= []) as EngineListener<K>[];
    list.push(listener);
    return () => {
      const i = list.indexOf(listener);
      if (i >= 0) list.splice(i, 1);
    };
  }

  /** True when anyone listens (lets the engine skip building a payload nobody reads). */
  has(event: EngineEventName): boolean {
    const list = this.listeners[event];
    return list !== undefined && list.length > 0;
  }

  /** Calls every listener; a throwing listener is reported and skipped. */
  emit<K extends EngineEventName>(event: K, payload: EngineEventMap[K]): void {
    const list = this.listeners[event] as EngineListener<K>[] | undefined;
    if (list === undefined) return;
    for (let i = 0; i < list.length; i++) {
      try {
        list[i]!(payload);
      } catch (error) {
        if (event !== 'listener:error') this.emit('listener:error', { event, error });
      }
    }
  }
}
