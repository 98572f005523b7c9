import { describe, it, expect } from 'vitest';
import type { SimulatedMessage } from '../../src/simulation/simulated-message.js';
import { createLocalFrame, YARD_ORIGIN } from '../../src/simulation/yard-geodesy.js';
import { createVehicleYardScenario, DEMO_VEHICLES, WHEEL_SIGMA_MPS } from '../../src/simulation/vehicle-yard-scenario.js';
import { START_S, byTime, countByTopic, groupByTopic, payloadOf, sampleSigma } from './message-helpers.js';

const frame = createLocalFrame(YARD_ORIGIN);

function run(durationS: number, defaultFaults: boolean, seed = 5): SimulatedMessage[] {
  return createVehicleYardScenario({ seed, startTimeS: START_S, defaultFaults }).advanceTo(START_S + durationS);
}

let cleanCache: Map<string, SimulatedMessage[]> | undefined;
/** Ten minutes of the yard without link outages, grouped by topic. */
function clean(): Map<string, SimulatedMessage[]> {
  cleanCache ??= groupByTopic(run(599.9, false));
  return cleanCache;
}

describe('vehicle-yard scenario', () => {
  it('names twelve tractors tug-01 … tug-12', () => {
    expect(DEMO_VEHICLES).toHaveLength(12);
    expect(DEMO_VEHICLES[0]).toBe('tug-01');
    expect(DEMO_VEHICLES[11]).toBe('tug-12');
  });

  it('names 10,000 load-test tractors tug-00001 … tug-10000', () => {
    const scenario = createVehicleYardScenario({ seed: 1, startTimeS: START_S, entities: 10000 });
    expect(scenario.entities).toHaveLength(10000);
    expect(scenario.entities[0]).toBe('tug-00001');
    expect(scenario.entities[9999]).toBe('tug-10000');
    const counts = countByTopic(scenario.advanceTo(START_S + 0.95));
    expect(counts.get('yard/tug-10000/wheel')).toBe(10);
  });

  it('publishes GNSS at 1 Hz, wheel speed at 10 Hz and truth at 1 Hz over 60 s', () => {
    const counts = countByTopic(run(59.9, false));
    for (const tug of DEMO_VEHICLES) {
      expect(counts.get(`yard/${tug}/gnss`)).toBe(60);
      expect(counts.get(`yard/${tug}/wheel`)).toBe(600);
      expect(counts.get(`sim/truth/yard/${tug}`)).toBe(60);
    }
    expect(counts.size).toBe(36);
  });

  it('writes the documented payload fields', () => {
    const topics = clean();
    expect(Object.keys(payloadOf(topics.get('yard/tug-01/gnss')![0]!))).toEqual(['t', 'lat', 'lon', 'hacc', 'seq']);
    expect(Object.keys(payloadOf(topics.get('yard/tug-01/wheel')![0]!))).toEqual(['t', 'speed_mps', 'seq']);
    expect(Object.keys(payloadOf(topics.get('sim/truth/yard/tug-01')![0]!))).toEqual([
      't', 'east', 'north', 'v_east', 'v_north', 'lat', 'lon',
    ]);
    expect(topics.get('yard/tug-01/gnss')![0]!.payload).toMatch(/"lat":51\.95\d{6},"lon":4\.05\d{6},/);
  });

  it('keeps every tractor inside the 600 m × 400 m yard', () => {
    for (const tug of DEMO_VEHICLES) {
      for (const m of clean().get(`sim/truth/yard/${tug}`)!) {
        const p = payloadOf(m);
        expect(p['east']! >= 0 && p['east']! <= 600 && p['north']! >= 0 && p['north']! <= 400).toBe(true);
      }
    }
  });

  it('gives truth lat/lon that are the WGS-84 image of truth east/north', () => {
    for (const m of clean().get('sim/truth/yard/tug-04')!) {
      const p = payloadOf(m);
      const enu = frame.fromGeodetic({ latDeg: p['lat']!, lonDeg: p['lon']!, heightM: 0 });
      // 9 decimals of a degree: 0.11 mm of latitude; the tangent-plane height (< 3 cm) moves e/n by < 1e-5 m.
      expect(Math.abs(enu.eastM - p['east']!)).toBeLessThan(2e-4);
      expect(Math.abs(enu.northM - p['north']!)).toBeLessThan(2e-4);
    }
  });

  it('reports hacc within 1.5-4 m and draws GNSS noise at that accuracy per axis', () => {
    const normalised: number[] = [];
    for (const tug of DEMO_VEHICLES) {
      const truth = byTime(clean().get(`sim/truth/yard/${tug}`)!);
      for (const m of clean().get(`yard/${tug}/gnss`)!) {
        const fix = payloadOf(m);
        const at = truth.get(fix['t']!.toFixed(3))!;
        expect(fix['hacc']! >= 1.5 && fix['hacc']! <= 4).toBe(true);
        const enu = frame.fromGeodetic({ latDeg: fix['lat']!, lonDeg: fix['lon']!, heightM: 0 });
        normalised.push((enu.eastM - at['east']!) / fix['hacc']!, (enu.northM - at['north']!) / fix['hacc']!);
      }
    }
    // 14,400 normalised errors: the sample sigma's standard error is about 0.6 %.
    expect(Math.abs(sampleSigma(normalised) - 1)).toBeLessThan(0.03);
  });

  it('varies the reported accuracy over time', () => {
    const hacc = clean().get('yard/tug-02/gnss')!.map((m) => payloadOf(m)['hacc']!);
    expect(Math.max(...hacc) - Math.min(...hacc)).toBeGreaterThan(0.5);
  });

  it('reports wheel speed as the norm of the true velocity with sigma near 0.1 m/s', () => {
    const residuals: number[] = [];
    for (const tug of DEMO_VEHICLES) {
      const truth = byTime(clean().get(`sim/truth/yard/${tug}`)!);
      for (const m of clean().get(`yard/${tug}/wheel`)!) {
        const w = payloadOf(m);
        const at = truth.get(w['t']!.toFixed(3));
        if (at !== undefined) residuals.push(w['speed_mps']! - Math.hypot(at['v_east']!, at['v_north']!));
      }
    }
    expect(residuals).toHaveLength(12 * 600);
    expect(Math.abs(sampleSigma(residuals) / WHEEL_SIGMA_MPS - 1)).toBeLessThan(0.05);
  });

  it('releases GNSS backlogs after link outages, shuffled, with event times and contents preserved', () => {
    const faulted = groupByTopic(run(1199.9, true, 8));
    const reference = groupByTopic(run(1199.9, false, 8));
    let bursts = 0;
    let outOfOrder = 0;
    for (const tug of DEMO_VEHICLES) {
      const gnss = faulted.get(`yard/${tug}/gnss`)!;
      const late = gnss.filter((m) => m.publishTimeS > m.eventTimeS);
      const releaseTimes = [...new Set(late.map((m) => m.publishTimeS))];
      for (const releaseS of releaseTimes) {
        const burst = late.filter((m) => m.publishTimeS === releaseS);
        bursts += 1;
        const times = burst.map((m) => m.eventTimeS);
        const sorted = [...times].sort((a, b) => a - b);
        if (times.some((t, i) => t !== sorted[i])) outOfOrder += 1;
        // Held fixes are consecutive 1 Hz samples of 5-30 s of outage, all older than the release.
        expect(sorted.at(-1)! - sorted[0]!).toBeLessThan(31);
        expect(sorted.length).toBeGreaterThanOrEqual(sorted.at(-1)! - sorted[0]! + 1 - 1e-6);
        expect(sorted.at(-1)!).toBeLessThan(releaseS);
        for (const m of burst) expect(payloadOf(m)['t']).toBeCloseTo(m.eventTimeS, 3);
      }
      // Same fixes as without outages, only later and reordered.
      const payloads = (list: SimulatedMessage[]) => list.filter((m) => m.eventTimeS < START_S + 1100).map((m) => m.payload).sort();
      expect(payloads(gnss)).toEqual(payloads(reference.get(`yard/${tug}/gnss`)!));
    }
    // About 1200 s / (180 s + ~17 s) ≈ 6 outages per tractor, 72 in all.
    expect(bursts).toBeGreaterThan(40);
    expect(outOfOrder).toBeGreaterThan(bursts * 0.8);
  });

  it('leaves wheel speed flowing during a GNSS outage', () => {
    const faulted = groupByTopic(run(600, true, 8));
    for (const tug of DEMO_VEHICLES) {
      expect(faulted.get(`yard/${tug}/wheel`)!.every((m) => m.publishTimeS === m.eventTimeS)).toBe(true);
    }
  });
});
