/**
 * A health interval split into slices: every track is evaluated exactly once per interval, and
 * the transitions equal those of one evaluation of all tracks at the same instants.
 */
import { describe, expect, it } from 'vitest';
import { parseConfig } from '../../src/config/load-config.js';
import { tanksEstimatorInput } from '../../src/config/default-demo-config.js';
import { Engine } from '../../src/engine/engine.js';
import type { HealthChange } from '../../src/engine/health-change.js';
import { createScenario } from '../../src/simulation/scenario.js';
import { parseFaultSpec } from '../../src/simulation/fault-plan.js';
import { generateRecording } from '../../src/simulation/simulation-runner.js';

const START_S = 1_796_000_000;
const SLICES = 2;

function engine(): { engine: Engine; changes: HealthChange[] } {
  const config = parseConfig({ estimators: [tanksEstimatorInput()] }, {});
  if (!config.ok) throw new Error(JSON.stringify(config.issues));
  const e = new Engine(config.config.estimators, { publish() {} });
  const changes: HealthChange[] = [];
  e.events.on('health:changed', (c) => changes.push(c));
  return { engine: e, changes };
}

/** The tank farm with a bias jump and a silent spell, so transitions both ways occur. */
function recording(durationS: number) {
  const plan = parseFaultSpec('bias-jump:tank-b/pressure:5:60-120,dropout:tank-a/level:150-190');
  if (!plan.ok) throw new Error(plan.message);
  return generateRecording(createScenario('tank-farm', { seed: 7, startTimeS: START_S, faults: plan.plan }), durationS, {});
}

/** Feeds messages in publish order; `tick(tickS)` runs once per whole second of event time. */
function drive(e: Engine, durationS: number, tick: (tickS: number) => void): void {
  let nextTickS = START_S + 1;
  for (const m of recording(durationS)) {
    while (m.publishTimeS >= nextTickS) {
      tick(nextTickS);
      nextTickS += 1;
    }
    e.handleMessage(m.topic, Buffer.from(m.payload), m.publishTimeS * 1000);
  }
}

const key = (c: HealthChange) => `${c.tS}|${c.entity}|${c.sensor ?? ''}|${c.from}>${c.to}|${c.reasons.join(',')}`;

describe('sliced health evaluation', () => {
  it('emits the same transitions as whole-interval evaluation when all slices of an interval run at one instant', { timeout: 60_000 }, () => {
    const whole = engine();
    drive(whole.engine, 300, (tS) => whole.engine.evaluateHealth(tS * 1000));
    const sliced = engine();
    drive(sliced.engine, 300, (tS) => {
      for (let s = 0; s < SLICES; s++) sliced.engine.evaluateHealthSlice(tS * 1000, s, SLICES);
    });
    // The recording must exercise the hysteresis, or the comparison proves nothing.
    expect(whole.changes.length).toBeGreaterThan(4);
    expect(whole.changes.some((c) => c.to === 'ok')).toBe(true);
    expect(sliced.changes.map(key).sort()).toEqual(whole.changes.map(key).sort());
  });

  it('evaluates each track exactly once per interval, across slices run at different instants', { timeout: 60_000 }, () => {
    const { engine: e } = engine();
    // Each evaluation of an initialized track asks it once whether it is stale: count those
    // calls made inside the health ticks, per track and per interval.
    let interval = -1;
    const perTrack = new Map<string, Map<number, number>>();
    const instrumented = new Set<string>();
    const instrument = () => {
      for (const [entity, track] of e.tracks().get('tanks') ?? []) {
        if (instrumented.has(entity)) continue;
        instrumented.add(entity);
        const isStale = track.isStale.bind(track);
        track.isStale = (nowS: number) => {
          if (interval >= 0) {
            const counts = perTrack.get(entity) ?? new Map<number, number>();
            counts.set(interval, (counts.get(interval) ?? 0) + 1);
            perTrack.set(entity, counts);
          }
          return isStale(nowS);
        };
      }
    };
    const intervals: number[] = [];
    drive(e, 60, (tS) => {
      instrument();
      interval = tS;
      intervals.push(tS);
      for (let s = 0; s < SLICES; s++) e.evaluateHealthSlice(tS * 1000 + (s * 1000) / SLICES, s, SLICES);
      interval = -1;
    });
    expect(perTrack.size).toBe(instrumented.size);
    expect(perTrack.size).toBeGreaterThanOrEqual(3);
    for (const counts of perTrack.values()) {
      // From its first evaluation on, a track is evaluated in every interval, once.
      const first = Math.min(...counts.keys());
      for (const tS of intervals.filter((t) => t >= first)) expect(counts.get(tS)).toBe(1);
    }
  });
});
