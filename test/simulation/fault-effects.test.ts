import { describe, it, expect } from 'vitest';
import type { FaultPlan } from '../../src/simulation/fault-plan.js';
import { parseFaultSpec } from '../../src/simulation/fault-plan.js';
import type { SimulatedMessage } from '../../src/simulation/simulated-message.js';
import { createTankFarmScenario } from '../../src/simulation/tank-farm-scenario.js';
import { createVehicleYardScenario } from '../../src/simulation/vehicle-yard-scenario.js';
import { createLocalFrame, YARD_ORIGIN } from '../../src/simulation/yard-geodesy.js';
import { START_S, groupByTopic, hashMessages, payloadOf } from './message-helpers.js';

function plan(spec: string): FaultPlan {
  const result = parseFaultSpec(spec);
  if (!result.ok) throw new Error(result.message);
  return result.plan;
}

function farm(spec: string, durationS = 199.9): Map<string, SimulatedMessage[]> {
  const scenario = createTankFarmScenario({ seed: 3, startTimeS: START_S, faults: plan(spec) });
  return groupByTopic(scenario.advanceTo(START_S + durationS));
}

function yard(spec: string, durationS = 99.9): Map<string, SimulatedMessage[]> {
  const scenario = createVehicleYardScenario({ seed: 3, startTimeS: START_S, faults: plan(spec), defaultFaults: false });
  return groupByTopic(scenario.advanceTo(START_S + durationS));
}

const baseline = farm('');
const elapsed = (m: SimulatedMessage): number => m.eventTimeS - START_S;
const within = (fromS: number, toS: number) => (m: SimulatedMessage) => elapsed(m) >= fromS - 1e-6 && elapsed(m) < toS - 1e-6;
const field = (name: string) => (m: SimulatedMessage) => payloadOf(m)[name]!;

describe('fault effects', () => {
  it('sends nothing in a dropout window but keeps counting sequence numbers', () => {
    const level = farm('dropout:tank-a/level:10-20').get('farm/tank-a/level')!;
    expect(level.filter(within(10, 20))).toEqual([]);
    const seqs = level.map(field('seq'));
    expect(seqs.slice(9, 11)).toEqual([9, 20]);
    expect(level).toHaveLength(baseline.get('farm/tank-a/level')!.length - 10);
  });

  it('repeats the last value of a stuck sensor with fresh times and sequence numbers', () => {
    const level = farm('stuck:tank-c/level:30-40').get('farm/tank-c/level')!;
    const before = level.filter(within(29, 30)).map(field('level_m'));
    const stuck = level.filter(within(30, 40));
    expect(stuck).toHaveLength(10);
    expect(new Set(stuck.map(field('level_m')))).toEqual(new Set(before));
    expect(stuck.map(field('seq'))).toEqual([30, 31, 32, 33, 34, 35, 36, 37, 38, 39]);
    expect(level.filter(within(40, 200)).map((m) => m.payload)).toEqual(
      baseline.get('farm/tank-c/level')!.filter(within(40, 200)).map((m) => m.payload),
    );
  });

  it('offsets a bias jump by the given measurement sigmas inside its window only', () => {
    // tank-b pressure +5σ (σ = 0.005 m) from 60 s to 120 s.
    const jumped = farm('bias-jump:tank-b/pressure:5:60-120').get('farm/tank-b/pressure')!.map(field('head_m'));
    const clean = baseline.get('farm/tank-b/pressure')!;
    clean.forEach((m, i) => {
      const offset = jumped[i]! - payloadOf(m)['head_m']!;
      const inside = elapsed(m) >= 60 - 1e-6 && elapsed(m) < 120 - 1e-6;
      expect(offset).toBeCloseTo(inside ? 0.025 : 0, 6);
    });
  });

  it('adds spikes of exactly the given magnitude at about the given rate', () => {
    const spiked = farm('spikes:tank-a/level:0.1:1.5', 1999.9).get('farm/tank-a/level')!.map(field('level_m'));
    const clean = farm('', 1999.9).get('farm/tank-a/level')!.map(field('level_m'));
    const offsets = clean.map((v, i) => Math.round((spiked[i]! - v) * 1000) / 1000);
    expect(new Set(offsets)).toEqual(new Set([0, 1.5, -1.5]));
    const rate = offsets.filter((d) => d !== 0).length / offsets.length;
    // 2000 samples at p = 0.1: standard error 0.0067.
    expect(Math.abs(rate - 0.1)).toBeLessThan(0.03);
  });

  it('spikes a GNSS fix by the given distance in a random direction', () => {
    const frame = createLocalFrame(YARD_ORIGIN);
    const enu = (m: SimulatedMessage) => frame.fromGeodetic({ latDeg: field('lat')(m), lonDeg: field('lon')(m), heightM: 0 });
    const spiked = yard('spikes:tug-05/gnss:0.5:40').get('yard/tug-05/gnss')!.map(enu);
    const clean = yard('').get('yard/tug-05/gnss')!.map(enu);
    const jumps = clean.map((p, i) => Math.hypot(spiked[i]!.eastM - p.eastM, spiked[i]!.northM - p.northM)).filter((d) => d > 0.01);
    expect(jumps.length).toBeGreaterThan(25);
    for (const d of jumps) expect(Math.abs(d - 40)).toBeLessThan(0.01);
  });

  it('re-sends duplicates verbatim right after the original', () => {
    const pressure = farm('duplicates:tank-a/pressure:0.2').get('farm/tank-a/pressure')!;
    const clean = baseline.get('farm/tank-a/pressure')!;
    const deduplicated = pressure.filter((m, i) => i === 0 || m.payload !== pressure[i - 1]!.payload);
    expect(deduplicated.map((m) => m.payload)).toEqual(clean.map((m) => m.payload));
    const ratio = pressure.length / clean.length;
    // 2000 messages at p = 0.2: standard error of the ratio 0.009.
    expect(Math.abs(ratio - 1.2)).toBeLessThan(0.04);
  });

  it('adds the clock skew to the reported time but not to the event time or the reading', () => {
    const skewed = yard('clock-skew:tug-03/gnss:-2.5').get('yard/tug-03/gnss')!;
    const clean = yard('').get('yard/tug-03/gnss')!;
    skewed.forEach((m, i) => {
      expect(field('t')(m)).toBeCloseTo(m.eventTimeS - 2.5, 3);
      expect(m.eventTimeS).toBe(clean[i]!.eventTimeS);
      expect(field('lat')(m)).toBe(field('lat')(clean[i]!));
    });
  });

  it('holds messages in a late-burst window and releases them shuffled at its end', () => {
    const level = farm('late-burst:tank-a/level:10-20').get('farm/tank-a/level')!;
    const burst = level.filter((m) => m.publishTimeS > m.eventTimeS);
    expect(burst).toHaveLength(10);
    for (const m of burst) expect(m.publishTimeS - START_S).toBeCloseTo(20, 6);
    const times = burst.map(elapsed);
    expect(times).not.toEqual([...times].sort((a, b) => a - b));
    expect([...times].sort((a, b) => a - b).map(Math.round)).toEqual([10, 11, 12, 13, 14, 15, 16, 17, 18, 19]);
    // The burst goes out just before the sample at 20 s, with the contents it had at its event time.
    const index = level.indexOf(burst[0]!);
    expect(elapsed(level[index + 10]!)).toBeCloseTo(20, 6);
    expect(level.map((m) => m.payload).sort()).toEqual(baseline.get('farm/tank-a/level')!.map((m) => m.payload).sort());
  });

  it('leaves every other stream bit-identical', () => {
    const faulted = farm('bias-jump:tank-b/pressure:5:60-120,spikes:tank-b/pressure:0.3:1,duplicates:tank-b/pressure:0.2');
    for (const [topic, messages] of baseline) {
      if (topic === 'farm/tank-b/pressure') continue;
      expect(hashMessages(faulted.get(topic)!)).toBe(hashMessages(messages));
    }
  });

  it('applies a wildcard target to every matching stream', () => {
    const faulted = farm('dropout:*/level:0-50');
    for (const tank of ['tank-a', 'tank-b', 'tank-c']) {
      expect(faulted.get(`farm/${tank}/level`)!.filter(within(0, 50))).toEqual([]);
      expect(faulted.get(`farm/${tank}/pressure`)).toHaveLength(2000);
    }
  });

  it('rejects a fault that matches no entity of the scenario, naming it', () => {
    expect(() => createTankFarmScenario({ seed: 1, startTimeS: START_S, faults: plan('dropout:tug-03/gnss:30-50') })).toThrow(
      /fault 1 \(dropout tug-03\/gnss\): no entity matches "tug-03"/,
    );
  });

  it('rejects a typed plan with a reversed window', () => {
    const faults: FaultPlan = [{ kind: 'stuck', entity: 'tank-a', sensor: 'level', fromS: 9, toS: 3 }];
    expect(() => createTankFarmScenario({ seed: 1, startTimeS: START_S, faults })).toThrow(/window end 3 s must be after start 9 s/);
  });
});
