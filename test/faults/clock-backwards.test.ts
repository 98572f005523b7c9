import { describe, expect, it } from 'vitest';
import { parseConfig } from '../../src/config/load-config.js';
import { Engine } from '../../src/engine/engine.js';

/**
 * The host clock steps back an hour (a bad NTP server, a VM restored from a snapshot) while
 * readings keep coming, then is corrected. The engine reads no clock: the shell passes arrival
 * times in, so driving it with a clock that jumps is exactly what the daemon would see.
 */

const T0_MS = Date.UTC(2026, 0, 12, 8, 0, 0);
const HOUR_MS = 3_600_000;
const IDLE_EVICT_S = 60;

function engineForTheFarm(): Engine {
  const result = parseConfig({
    estimators: [
      {
        name: 'tanks',
        model: { type: 'random-walk', states: ['level'], q: 1e-4 },
        prior: { sigma: { level: 10 } },
        entities: { max: 10, idleEvictS: IDLE_EVICT_S },
        sensors: {
          // Stamped by the tank's own controller.
          level: {
            topic: 'farm/{tank}/level',
            decode: { format: 'json', values: ['level_m'], time: 't' },
            measurement: { type: 'linear', reads: { level: 1 }, sigma: 0.02 },
          },
        },
      },
      {
        name: 'gauges',
        model: { type: 'random-walk', states: ['head'], q: 1e-4 },
        prior: { sigma: { head: 10 } },
        entities: { max: 10, idleEvictS: IDLE_EVICT_S },
        sensors: {
          // A bare number: its time is the arrival time, i.e. the stepping clock.
          head: {
            topic: 'farm/{tank}/gauge',
            decode: { format: 'number' },
            measurement: { type: 'linear', reads: { head: 1 }, sigma: 0.01 },
          },
        },
      },
    ],
  }, {});
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return new Engine(result.config.estimators, { publish: () => {} });
}

interface Verdicts {
  accepted: number;
  rejected: Map<string, number>;
}

function countVerdicts(engine: Engine): Verdicts {
  const verdicts: Verdicts = { accepted: 0, rejected: new Map() };
  engine.events.on('measurement:accepted', () => (verdicts.accepted += 1));
  engine.events.on('measurement:rejected', (e) => verdicts.rejected.set(e.reason, (verdicts.rejected.get(e.reason) ?? 0) + 1));
  return verdicts;
}

/** One second of traffic at true time `trueMs`, arriving when the host clock reads `clockMs`. */
function second(engine: Engine, trueMs: number, clockMs: number, tanks: readonly string[]): void {
  for (const tank of tanks) {
    engine.handleMessage(`farm/${tank}/level`, Buffer.from(JSON.stringify({ level_m: 3.2, t: trueMs / 1000 })), clockMs);
    engine.handleMessage(`farm/${tank}/gauge`, Buffer.from('3.21'), clockMs);
  }
}

function expectFiniteTracks(engine: Engine): void {
  for (const [, tracks] of engine.tracks()) {
    for (const [, track] of tracks) {
      expect(Array.from(track.x).every(Number.isFinite)).toBe(true);
      expect(Array.from(track.P).every(Number.isFinite)).toBe(true);
      expect(Number.isFinite(track.tS)).toBe(true);
    }
  }
}

function entities(engine: Engine, estimator: string): string[] {
  return [...(engine.tracks().get(estimator)?.keys() ?? [])].sort();
}

/** Ten seconds in step, then tank-c falls silent; the clock then reads an hour behind. */
function runUpToTheStep(engine: Engine): void {
  for (let k = 0; k < 10; k++) second(engine, T0_MS + k * 1000, T0_MS + k * 1000, ['tank-a', 'tank-b', 'tank-c']);
  for (let k = 10; k < 90; k++) second(engine, T0_MS + k * 1000, T0_MS + k * 1000, ['tank-a', 'tank-b']);
}

describe('fault: the host clock steps back an hour', () => {
  it('refuses stamped readings as future and arrival-stamped ones as too late, without a throw or a non-finite state', () => {
    const engine = engineForTheFarm();
    runUpToTheStep(engine);
    const verdicts = countVerdicts(engine);
    const clockOffsetMs = -HOUR_MS;
    for (let k = 90; k < 150; k++) {
      const trueMs = T0_MS + k * 1000;
      expect(() => second(engine, trueMs, trueMs + clockOffsetMs, ['tank-a', 'tank-b'])).not.toThrow();
      engine.evaluateHealth(trueMs + clockOffsetMs);
      engine.publishPredictions('tanks', trueMs + clockOffsetMs);
    }
    // 60 s × 2 tanks: each stamped reading is an hour ahead of the clock (tolerance 5 s), and
    // each arrival-stamped one an hour behind the newest applied (history horizon 120 s).
    expect(verdicts.accepted).toBe(0);
    expect(verdicts.rejected.get('future')).toBe(120);
    expect(verdicts.rejected.get('too-late')).toBe(120);
    expect([...verdicts.rejected.keys()].sort()).toEqual(['future', 'too-late']);
    expectFiniteTracks(engine);
  });

  it('evicts nothing while the clock reads an hour behind, not even the silent tank', () => {
    const engine = engineForTheFarm();
    runUpToTheStep(engine);
    for (let k = 90; k < 150; k++) second(engine, T0_MS + k * 1000, T0_MS + k * 1000 - HOUR_MS, ['tank-a', 'tank-b']);
    // Every track was last heard "in the future" of the stepped clock, so none looks idle:
    // eviction waits rather than guessing.
    expect(engine.evictIdle(T0_MS + 150_000 - HOUR_MS)).toBe(0);
    expect(entities(engine, 'tanks')).toEqual(['tank-a', 'tank-b', 'tank-c']);
    expect(entities(engine, 'gauges')).toEqual(['tank-a', 'tank-b', 'tank-c']);
  });

  it('keeps the tanks that reported through the step once the clock is corrected, and evicts the silent one', () => {
    const engine = engineForTheFarm();
    runUpToTheStep(engine);
    // The clock reads an hour behind for 30 s (less than the 60 s idle time), then is corrected.
    for (let k = 90; k < 120; k++) second(engine, T0_MS + k * 1000, T0_MS + k * 1000 - HOUR_MS, ['tank-a', 'tank-b']);
    // An eviction tick right after the correction, before the next reading, must not take
    // tank-a and tank-b, which reported every second; tank-c has been silent 111 s > 60 s.
    expect(engine.evictIdle(T0_MS + 120_000)).toBe(2);
    expect(entities(engine, 'tanks')).toEqual(['tank-a', 'tank-b']);
    expect(entities(engine, 'gauges')).toEqual(['tank-a', 'tank-b']);

    // And they estimate on from the next reading as before the step.
    const verdicts = countVerdicts(engine);
    second(engine, T0_MS + 121_000, T0_MS + 121_000, ['tank-a', 'tank-b']);
    expect(verdicts.accepted).toBe(4);
    expectFiniteTracks(engine);
  });
});
