import { describe, it, expect } from 'vitest';
import {
  createTankFarmScenario,
  LEVEL_SIGMA_M,
  PRESSURE_BIAS_SIGMA_M,
  PRESSURE_BIAS_TAU_S,
  PRESSURE_SIGMA_M,
} from '../../src/simulation/tank-farm-scenario.js';
import type { SimulatedMessage } from '../../src/simulation/simulated-message.js';
import { START_S, byTime, countByTopic, groupByTopic, onTopic, payloadOf, sampleSigma } from './message-helpers.js';

const TANKS = ['tank-a', 'tank-b', 'tank-c'];

function run(durationS: number, entities?: number) {
  const scenario = createTankFarmScenario({ seed: 11, startTimeS: START_S, ...(entities === undefined ? {} : { entities }) });
  return { scenario, messages: scenario.advanceTo(START_S + durationS) };
}

// One hour of the demo, shared by the read-only tests below.
let hourCache: Map<string, SimulatedMessage[]> | undefined;
function hourTopics(): Map<string, SimulatedMessage[]> {
  hourCache ??= groupByTopic(run(3599.9).messages);
  return hourCache;
}
function hour(topic: string): SimulatedMessage[] {
  return hourTopics().get(topic) ?? [];
}

/** Level residuals (measured − true) at the instants both exist, per tank. */
function levelResiduals(topics: Map<string, SimulatedMessage[]>, tank: string): number[] {
  const truth = byTime(topics.get(`sim/truth/farm/${tank}`) ?? []);
  return (topics.get(`farm/${tank}/level`) ?? []).map((m) => {
    const p = payloadOf(m);
    return p['level_m']! - truth.get(p['t']!.toFixed(3))!['level']!;
  });
}

describe('tank-farm scenario', () => {
  it('names the three demo tanks', () => {
    expect(run(0).scenario.entities).toEqual(TANKS);
  });

  it('publishes level at 1 Hz, pressure at 10 Hz and truth at 1 Hz over 60 s', () => {
    // Ticks at 0.0, 0.1, …, 59.9 s: exactly 60 s of sampling.
    const counts = countByTopic(run(59.9).messages);
    for (const tank of TANKS) {
      expect(counts.get(`farm/${tank}/level`)).toBe(60);
      expect(counts.get(`farm/${tank}/pressure`)).toBe(600);
      expect(counts.get(`sim/truth/farm/${tank}`)).toBe(60);
    }
    expect(counts.size).toBe(9);
  });

  it('writes the documented payload fields with sequence numbers from 0', () => {
    const { messages } = run(2);
    const level = onTopic(messages, 'farm/tank-b/level').map(payloadOf);
    expect(Object.keys(level[0]!)).toEqual(['t', 'level_m', 'seq']);
    expect(level.map((p) => p['seq'])).toEqual([0, 1]);
    expect(Object.keys(payloadOf(onTopic(messages, 'farm/tank-b/pressure')[0]!))).toEqual(['t', 'head_m', 'seq']);
    expect(Object.keys(payloadOf(onTopic(messages, 'sim/truth/farm/tank-b')[0]!))).toEqual([
      't',
      'level',
      'level_rate',
      'pressure_bias',
    ]);
  });

  it('stamps t with the tick time to three decimals', () => {
    const first = onTopic(run(1).messages, 'farm/tank-b/level')[0]!;
    expect(first.payload).toMatch(/^\{"t":1717200000\.100,/);
    expect(first.eventTimeS).toBeCloseTo(START_S + 0.1, 6);
  });

  it('has level noise with sigma near 0.02 m once echo spikes are set aside', () => {
    const residuals = TANKS.flatMap((tank) => levelResiduals(hourTopics(), tank)).filter((r) => Math.abs(r) < 0.1);
    // 10,800 samples: the sample sigma's standard error is about 0.7 %.
    expect(Math.abs(sampleSigma(residuals) / LEVEL_SIGMA_M - 1)).toBeLessThan(0.05);
  });

  it('adds echo spikes of 0.2-0.6 m to about 0.5 % of level samples', () => {
    const residuals = TANKS.flatMap((tank) => levelResiduals(hourTopics(), tank));
    const spikes = residuals.filter((r) => Math.abs(r) > 0.12);
    // 10,800 samples: 54 expected, Poisson sigma 7.3; the band is about ±3.3 sigma.
    expect(spikes.length).toBeGreaterThan(30);
    expect(spikes.length).toBeLessThan(78);
    for (const r of spikes) {
      expect(Math.abs(r)).toBeGreaterThan(0.2 - 5 * LEVEL_SIGMA_M);
      expect(Math.abs(r)).toBeLessThan(0.6 + 5 * LEVEL_SIGMA_M);
    }
    expect(spikes.some((r) => r > 0) && spikes.some((r) => r < 0)).toBe(true);
  });

  it('reports head as level plus pressure bias with sigma near 0.005 m', () => {
    const residuals = TANKS.flatMap((tank) => {
      const truth = byTime(hour(`sim/truth/farm/${tank}`).slice(0, 1000));
      return hour(`farm/${tank}/pressure`).flatMap((m) => {
        const p = payloadOf(m);
        const at = truth.get(p['t']!.toFixed(3));
        return at === undefined ? [] : [p['head_m']! - at['level']! - at['pressure_bias']!];
      });
    });
    expect(residuals.length).toBe(3000);
    expect(Math.abs(sampleSigma(residuals) / PRESSURE_SIGMA_M - 1)).toBeLessThan(0.05);
  });

  it('starts the pressure bias in steady state (variance near 0.03² m² across tanks)', () => {
    const { messages } = run(0.9, 2000);
    const biases = messages.filter((m) => m.kind === 'truth').map((m) => payloadOf(m)['pressure_bias']!);
    expect(biases.length).toBe(2000);
    // Standard error of a variance from 2000 samples: sqrt(2/2000) ≈ 3.2 %.
    expect(Math.abs(sampleSigma(biases) ** 2 / PRESSURE_BIAS_SIGMA_M ** 2 - 1)).toBeLessThan(0.12);
  });

  it('drives the bias with a 3600 s time constant (1 s increments of variance 2σ²(1 − e^(−1/τ)))', () => {
    const increments = TANKS.flatMap((tank) => {
      const b = hour(`sim/truth/farm/${tank}`).slice(0, 1200).map((m) => payloadOf(m)['pressure_bias']!);
      return b.slice(1).map((x, i) => x - b[i]!);
    });
    const expected = 2 * PRESSURE_BIAS_SIGMA_M ** 2 * (1 - Math.exp(-1 / PRESSURE_BIAS_TAU_S));
    const meanSquare = increments.reduce((a, d) => a + d * d, 0) / increments.length;
    // About 3600 increments: standard error of the mean square ≈ 2.4 %.
    expect(Math.abs(meanSquare / expected - 1)).toBeLessThan(0.1);
  });

  it('keeps level rates to a few mm/s and levels inside each tank', () => {
    const truth = TANKS.flatMap((tank) => hour(`sim/truth/farm/${tank}`).map(payloadOf));
    expect(truth.length).toBe(3 * 3600);
    for (const p of truth) {
      expect(Math.abs(p['level_rate']!)).toBeLessThan(0.007);
      expect(p['level']!).toBeGreaterThan(0);
      expect(p['level']!).toBeLessThan(12);
    }
  });

  it('cycles each pump: every tank both fills and drains within an hour', () => {
    for (const tank of TANKS) {
      const rates = hour(`sim/truth/farm/${tank}`).map((m) => payloadOf(m)['level_rate']!);
      expect(rates.some((r) => r > 0.0015)).toBe(true);
      expect(rates.some((r) => r < -0.0012)).toBe(true);
    }
  });

  it('ramps the level rate instead of stepping it', () => {
    for (const tank of TANKS) {
      const rates = hour(`sim/truth/farm/${tank}`).map((m) => payloadOf(m)['level_rate']!);
      const biggestStep = Math.max(...rates.slice(1).map((r, i) => Math.abs(r - rates[i]!)));
      // Ramp 1e-4 m/s² over 1 s plus the small Gauss–Markov wander; a pump step would be ~6e-3.
      expect(biggestStep).toBeLessThan(3e-4);
    }
  });

  it('integrates level from level rate', () => {
    const truth = hour('sim/truth/farm/tank-a').map(payloadOf);
    for (let i = 1; i < truth.length; i += 1) {
      const predicted = truth[i - 1]!['level']! + truth[i]!['level_rate']!;
      // Rate changes by at most ~3e-4 m/s within the second, so the error stays below 3e-4 m.
      expect(Math.abs(truth[i]!['level']! - predicted)).toBeLessThan(3e-4);
    }
  });
});
