import { afterEach, describe, expect, it, vi } from 'vitest';
import { pino } from 'pino';
import { EngineEvents } from '../../src/engine/engine-events.js';
import { HEALTH_LOG_INTERVAL_MS, HEALTH_LOG_LINES_PER_INTERVAL, wireEngineLogging } from '../../src/daemon/engine-logging.js';

function capture() {
  const lines: Record<string, unknown>[] = [];
  const log = pino({ level: 'info' }, { write: (s: string) => { lines.push(JSON.parse(s) as Record<string, unknown>); } });
  return { log, lines };
}

const change = (entity: string, to: 'ok' | 'degraded' | 'failed', reasons: ('silent' | 'gate-rate')[]) =>
  ({ estimator: 'yard', entity, sensor: 'gnss', from: 'ok' as const, to, reasons, tS: 0 });

afterEach(() => {
  vi.useRealTimers();
});

describe('health transition logging', () => {
  it('logs the first transitions of an interval one by one and sums the rest into one line', () => {
    vi.useFakeTimers();
    let nowMs = 1_000_000;
    const events = new EngineEvents();
    const { log, lines } = capture();
    const unwire = wireEngineLogging(events, log, () => nowMs);
    const total = HEALTH_LOG_LINES_PER_INTERVAL + 500;
    for (let i = 0; i < total; i++) events.emit('health:changed', change(`tractor-${i}`, i % 5 === 0 ? 'failed' : 'degraded', i % 2 === 0 ? ['silent'] : ['silent', 'gate-rate']));
    expect(lines.filter((l) => l['msg'] === 'health changed')).toHaveLength(HEALTH_LOG_LINES_PER_INTERVAL);
    expect(lines.some((l) => l['msg'] === 'health changes not logged one by one')).toBe(false);
    nowMs += HEALTH_LOG_INTERVAL_MS;
    vi.advanceTimersByTime(HEALTH_LOG_INTERVAL_MS);
    const summaries = lines.filter((l) => l['msg'] === 'health changes not logged one by one');
    expect(summaries).toHaveLength(1);
    const suppressed = Array.from({ length: total }, (_, i) => i).slice(HEALTH_LOG_LINES_PER_INTERVAL);
    expect(summaries[0]).toMatchObject({
      suppressed: 500,
      logged: HEALTH_LOG_LINES_PER_INTERVAL,
      to: { ok: 0, failed: suppressed.filter((i) => i % 5 === 0).length, degraded: suppressed.filter((i) => i % 5 !== 0).length },
      reasons: { silent: 500, 'gate-rate': suppressed.filter((i) => i % 2 === 1).length },
    });
    // A new interval logs one by one again.
    events.emit('health:changed', change('tractor-x', 'ok', []));
    expect(lines.at(-1)).toMatchObject({ msg: 'health recovered', entity: 'tractor-x' });
    unwire();
  });

  it('writes no summary when nothing was suppressed, and flushes a pending one on unwiring', () => {
    vi.useFakeTimers();
    const events = new EngineEvents();
    const { log, lines } = capture();
    const unwire = wireEngineLogging(events, log, () => 5_000);
    for (let i = 0; i < HEALTH_LOG_LINES_PER_INTERVAL; i++) events.emit('health:changed', change(`t${i}`, 'degraded', ['silent']));
    vi.advanceTimersByTime(5 * HEALTH_LOG_INTERVAL_MS);
    expect(lines.filter((l) => l['msg'] === 'health changes not logged one by one')).toHaveLength(0);
    events.emit('health:changed', change('extra', 'degraded', ['silent']));
    unwire();
    expect(lines.at(-1)).toMatchObject({ msg: 'health changes not logged one by one', suppressed: 1 });
  });
});
