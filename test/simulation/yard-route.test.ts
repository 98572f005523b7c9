import { describe, it, expect } from 'vitest';
import { createPrng } from '../../src/simulation/prng.js';
import { CRUISE_RANGE_MPS, LANE_EAST_M, LANE_NORTH_M, YardVehicleMotion } from '../../src/simulation/yard-route.js';

interface Sample {
  e: number;
  n: number;
  ve: number;
  vn: number;
  speed: number;
}

/** One hour of motion at 10 Hz for each of several tractors. */
function trajectories(count: number, ticks = 36000): Sample[][] {
  return Array.from({ length: count }, (_, k) => {
    const motion = new YardVehicleMotion(createPrng('route-test').fork(`tug-${k}`));
    const samples: Sample[] = [];
    for (let i = 0; i < ticks; i += 1) {
      if (i > 0) motion.step(0.1);
      samples.push({ e: motion.eastM, n: motion.northM, ve: motion.vEastMps, vn: motion.vNorthMps, speed: motion.speedMps });
    }
    return samples;
  });
}

const runs = trajectories(4);
const all = runs.flat();

function nearLane(value: number, lanes: readonly number[]): boolean {
  return lanes.some((lane) => Math.abs(value - lane) < 1e-9);
}

describe('YardVehicleMotion', () => {
  it('stays on a lane or on a turn within 10 m of a junction', () => {
    const off = all.filter((s) => {
      const onLane = nearLane(s.e, LANE_EAST_M) || nearLane(s.n, LANE_NORTH_M);
      const nearJunction =
        LANE_EAST_M.some((x) => Math.abs(s.e - x) <= 10 + 1e-9) && LANE_NORTH_M.some((y) => Math.abs(s.n - y) <= 10 + 1e-9);
      return !onLane && !nearJunction;
    });
    expect(off).toEqual([]);
  });

  it('never exceeds the top cruise speed and reports speed as the norm of the velocity', () => {
    const top = all.reduce((m, s) => Math.max(m, s.speed), 0);
    const bottom = all.reduce((m, s) => Math.min(m, s.speed), Infinity);
    const normError = all.reduce((m, s) => Math.max(m, Math.abs(Math.hypot(s.ve, s.vn) - s.speed)), 0);
    expect(top).toBeLessThanOrEqual(CRUISE_RANGE_MPS[1] + 1e-12);
    expect(bottom).toBe(0);
    expect(normError).toBeLessThan(1e-9);
  });

  it('moves consistently with its velocity (trapezoid over each 0.1 s step)', () => {
    let worstM = 0;
    for (const run of runs) {
      for (let i = 1; i < run.length; i += 1) {
        const a = run[i - 1]!;
        const b = run[i]!;
        const errM = Math.hypot(b.e - a.e - 0.05 * (a.ve + b.ve), b.n - a.n - 0.05 * (a.vn + b.vn));
        worstM = Math.max(worstM, errM);
      }
    }
    // Chord against arc on a turn and the last few cm/s snapped to zero at a stop stay below 1 cm.
    expect(worstM).toBeLessThan(0.01);
  });

  it('changes velocity smoothly (below 0.1 m/s per step, turns and stops included)', () => {
    let worstMps = 0;
    for (const run of runs) {
      for (let i = 1; i < run.length; i += 1) {
        worstMps = Math.max(worstMps, Math.hypot(run[i]!.ve - run[i - 1]!.ve, run[i]!.vn - run[i - 1]!.vn));
      }
    }
    // Acceleration 0.5 m/s², braking 0.7 m/s², turns 0.4 m/s² lateral: at most ~0.07 m/s per 0.1 s.
    expect(worstMps).toBeLessThan(0.1);
  });

  it('both stops and turns within an hour', () => {
    for (const run of runs) {
      const stopped = run.filter((s) => s.speed === 0).length / run.length;
      expect(stopped).toBeGreaterThan(0.02);
      expect(stopped).toBeLessThan(0.6);
      const turning = run.filter((s) => Math.abs(s.ve) > 0.1 && Math.abs(s.vn) > 0.1).length;
      expect(turning).toBeGreaterThan(0);
    }
  });

  it('drives straight legs at 2-5 m/s', () => {
    const cruising = all.filter((s) => s.speed > 1.99);
    expect(cruising.length / all.length).toBeGreaterThan(0.4);
    expect(cruising.some((s) => s.speed > 4)).toBe(true);
  });

  it('repeats the same path for the same stream', () => {
    const again = trajectories(1, 3000)[0]!;
    expect(again).toEqual(runs[0]!.slice(0, 3000));
  });
});
