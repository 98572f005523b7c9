/**
 * Logs what an operator must see from the engine's events: new and evicted tracks, health
 * transitions, and rejected messages — the last rate-limited per topic and reason, so a broken
 * sensor at 10 Hz writes one line a minute, not ten a second. Health transitions are bounded too:
 * when thousands of tracks change at once (a feed that stops, a daemon that falls behind), the
 * first lines of each second are written and the rest summed into one line with counts by state
 * and reason. The events themselves (MQTT, WebSocket) stay complete; only the log is thinned.
 */
import type { Logger } from 'pino';
import type { EngineEvents } from '../engine/engine-events.js';
import type { HealthState } from '../engine/health-change.js';

/** Minimum interval between two log lines for the same (topic, reason). */
export const REJECTION_LOG_INTERVAL_MS = 60_000;

/** Health transitions logged one per line in each interval; past it they are counted into one summary line. */
export const HEALTH_LOG_LINES_PER_INTERVAL = 20;

/** The interval of HEALTH_LOG_LINES_PER_INTERVAL (ms). */
export const HEALTH_LOG_INTERVAL_MS = 1000;

/** Most (topic, reason) pairs remembered for rate limiting; beyond, the oldest are forgotten. */
const MAX_REMEMBERED = 10_000;

/** Subscribes the logger; returns a function that unsubscribes. */
export function wireEngineLogging(events: EngineEvents, log: Logger, now: () => number = Date.now): () => void {
  const lastLogged = new Map<string, { atMs: number; suppressed: number }>();
  const healthWindow = {
    startMs: Number.NEGATIVE_INFINITY, logged: 0, suppressed: 0,
    byState: { ok: 0, degraded: 0, failed: 0 } as Record<HealthState, number>,
    byReason: {} as Record<string, number>,
    timer: null as ReturnType<typeof setTimeout> | null,
  };
  const flushHealthSummary = (): void => {
    if (healthWindow.timer !== null) clearTimeout(healthWindow.timer);
    healthWindow.timer = null;
    if (healthWindow.suppressed === 0) return;
    // Warn when any of them went bad; a batch of recoveries alone is information.
    const level = healthWindow.byState.degraded + healthWindow.byState.failed > 0 ? 'warn' : 'info';
    log[level]({
      suppressed: healthWindow.suppressed, logged: healthWindow.logged, intervalMs: HEALTH_LOG_INTERVAL_MS,
      to: { ...healthWindow.byState }, reasons: { ...healthWindow.byReason },
    }, 'health changes not logged one by one');
    healthWindow.suppressed = 0;
    healthWindow.byState = { ok: 0, degraded: 0, failed: 0 };
    healthWindow.byReason = {};
  };
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
      const t = now();
      if (t - healthWindow.startMs >= HEALTH_LOG_INTERVAL_MS || t < healthWindow.startMs) {
        flushHealthSummary();
        healthWindow.startMs = t;
        healthWindow.logged = 0;
      }
      if (healthWindow.logged < HEALTH_LOG_LINES_PER_INTERVAL) {
        healthWindow.logged += 1;
        const fields = { estimator: e.estimator, entity: e.entity, sensor: e.sensor, from: e.from, to: e.to, reasons: e.reasons };
        if (e.to === 'ok') log.info(fields, 'health recovered');
        else log.warn(fields, 'health changed');
        return;
      }
      healthWindow.suppressed += 1;
      healthWindow.byState[e.to] += 1;
      if (e.reasons.length === 0) healthWindow.byReason['none'] = (healthWindow.byReason['none'] ?? 0) + 1;
      for (let i = 0; i < e.reasons.length; i++) {
        const r = e.reasons[i]!;
        healthWindow.byReason[r] = (healthWindow.byReason[r] ?? 0) + 1;
      }
      // A summary is due even if no transition follows to close the interval.
      if (healthWindow.timer === null) {
        healthWindow.timer = setTimeout(flushHealthSummary, Math.max(0, healthWindow.startMs + HEALTH_LOG_INTERVAL_MS - t));
        healthWindow.timer.unref?.();
      }
    }),
    events.on('listener:error', (e) => log.error({ err: e.error, event: e.event }, 'an event listener failed')),
  ];
  return () => {
    for (const off of offs) off();
    flushHealthSummary();
  };
}
