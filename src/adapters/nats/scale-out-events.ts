/**
 * The scale-out node's typed events, for logs, metrics and tests. Listeners run synchronously;
 * one that throws is ignored (it must not stop message handling).
 */
import type { HandoverOutcome } from './partition-ownership.js';

/** Every event and its payload. */
export interface ScaleOutEventMap {
  /** This replica wrote its claim; `previous` is the replica it took the partition from. */
  'partition:claimed': { partition: number; epoch: number; previous: string | null };
  /** Consumption starts at `fromSeq` after `restored` tracks came from the snapshot. */
  'partition:consuming': { partition: number; epoch: number; fromSeq: number; restored: number; handover: HandoverOutcome; snapshotProblem: string | null };
  'partition:caught-up': { partition: number; seq: number };
  /** Consumption paused (no successful renewal for leaseMs) or resumed. */
  'partition:suspended': { partition: number; reason: string };
  'partition:resumed': { partition: number; fromSeq: number };
  /** Another replica owns the partition now: this one stopped it and dropped its tracks. */
  'partition:lost': { partition: number; epoch: number; reason: string };
  /** A snapshot was written and committed by the guarded owner-record write. */
  'snapshot:committed': { partition: number; epoch: number; seq: number; object: string; final: boolean };
  /** One stream message was handed to the engine. */
  'message': { partition: number; seq: number; topic: string; arrivalMs: number };
  /** A message's partition differs from the one its entity tokens hash to. */
  'drift': { partition: number; expected: number; subject: string };
  'ready:changed': { ready: boolean };
}

/** Name of a scale-out event. */
export type ScaleOutEventName = keyof ScaleOutEventMap;

/** A listener for one event. */
export type ScaleOutListener<K extends ScaleOutEventName> = (payload: ScaleOutEventMap[K]) => void;

/** Minimal typed emitter. */
export class ScaleOutEvents {
  private readonly listeners: { [K in ScaleOutEventName]?: ScaleOutListener<K>[] } = {};

  /** Subscribes; returns a function that unsubscribes. */
  on<K extends ScaleOutEventName>(event: K, listener: ScaleOutListener<K>): () => void {
    const list = (this.listeners[event] ??= []) as ScaleOutListener<K>[];
    list.push(listener);
    return () => {
      const i = list.indexOf(listener);
      if (i >= 0) list.splice(i, 1);
    };
  }

  /** True when anyone listens. */
  has(event: ScaleOutEventName): boolean {
    return (this.listeners[event]?.length ?? 0) > 0;
  }

  emit<K extends ScaleOutEventName>(event: K, payload: ScaleOutEventMap[K]): void {
    const list = this.listeners[event] as ScaleOutListener<K>[] | undefined;
    if (list === undefined) return;
    for (const listener of [...list]) {
      try {
        listener(payload);
      } catch {
        // a listener's failure is its own; message handling goes on
      }
    }
  }
}
