/**
 * Logs what an operator must see from the engine's events: new and evicted tracks, health
 * transitions, and rejected messages — the last rate-limited per topic and reason, so a broken
 * sensor at 10 Hz writes one line a minute, not ten a second.
 */
import type { Logger } from 'pino';
import type { EngineEvents } from '../engine/engine-events.js';

/** Minimum interval between two log lines for the same (topic, reason). */
export const REJECTION_LOG_INTERVAL_MS = 60_000;

/** Most (topic, reason) pairs remembered for rate limiting; beyond, the oldest are forgotten. */
const MAX_REMEMBERED = 10_000;

/** Subscribes the logger; returns a function that unsubscribes. */
export function wireEngineLogging(events: EngineEvents, log: Logger, now: () => number = Date.now): () => void {
  const lastLogged = new Map<string, { atMs: number; suppressed: number }>();
  const offs = [
    events.on('measurement:rejected', (e) => {
      const key = `${e.topic}\u0000${e.reason}`;
      const t = now();
      const seen = lastLogged.get(key);
      if (seen !== undefined && t - seen.atMs < REJECTION_LOG_INTERVAL_MS) {
        seen.suppressed += 1;
        return;
      }
      if (lastLogged.size >= MAX_REMEMBERED) lastLogged.delete(lastLogged.keys().next().value!);
      log.warn({ topic: e.topic, reason: e.reason, estimator: e.estimator || undefined, sensor: e.sensor || undefined, entity: e.entity ?? undefined, suppressedSinceLast: seen?.suppressed ?? 0 }, 'measurement rejected');
      lastLogged.set(key, { atMs: t, suppressed: 0 });
    }),
    events.on('track:created', (e) => log.info(e, 'track created')),
    events.on('track:evicted', (e) => log.info(e, 'track removed')),
    events.on('health:changed', (e) => {
      const fields = { estimator: e.estimator, entity: e.entity, sensor: e.sensor, from: e.from, to: e.to, reasons: e.reasons };
      if (e.to === 'ok') log.info(fields, 'health recovered');
      else log.warn(fields, 'health changed');
    }),
    events.on('listener:error', (e) => log.error({ err: e.error, event: e.event }, 'an event listener failed')),
  ];
  return () => {
    for (const off of offs) off();
  };
}
