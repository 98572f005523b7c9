/**
 * GNSS fixes for the e2e bench: the vehicle-yard scenario's vehicles (names from
 * `createScenario`, e.g. `tug-00001`) driving straight lines at constant speed, each fix built
 * on demand in the scenario's payload shape
 * `{"t":…,"lat":…,"lon":…,"hacc":…,"seq":…}`. Built by hand rather than by running the
 * scenario, because 200,000 fixes would mean simulating about 2 million wheel readings too.
 */
import { createPrng, type Prng } from '../../src/simulation/prng.js';
import { createScenario } from '../../src/simulation/scenario.js';
import { createLocalFrame, YARD_ORIGIN } from '../../src/simulation/yard-geodesy.js';

/** One fix ready to publish. */
export interface YardFix {
  readonly topic: string;
  readonly payload: string;
}

/** A fleet of vehicles whose fixes the bench publishes. */
export interface YardFleet {
  /** Vehicle names, in the order the bench cycles through them. */
  readonly vehicles: readonly string[];
  /** The fix of vehicle `index` at epoch time `tText` (seconds, as written in the payload). */
  fix(index: number, tText: string): YardFix;
}

interface Vehicle {
  readonly topic: string;
  readonly eastM: number;
  readonly northM: number;
  readonly vEastMps: number;
  readonly vNorthMps: number;
  readonly haccM: number;
  seq: number;
}

/**
 * `count` vehicles at seeded start positions (within 500 m of the yard origin at `referenceS`)
 * and velocities (0.5 to 5 m/s in any direction), each fix drawn with its own N(0, hacc²) noise.
 */
export function createYardFleet(count: number, seed: number, referenceS: number): YardFleet {
  const scenario = createScenario('vehicle-yard', { seed, startTimeS: referenceS, entities: count, defaultFaults: false });
  const frame = createLocalFrame(YARD_ORIGIN);
  const rng: Prng = createPrng(seed).fork('e2e-bench');
  const vehicles: Vehicle[] = scenario.entities.map((name) => {
    const speed = rng.nextUniform(0.5, 5);
    const heading = rng.nextUniform(0, 2 * Math.PI);
    return {
      topic: `yard/${name}/gnss`,
      eastM: rng.nextUniform(-500, 500),
      northM: rng.nextUniform(-500, 500),
      vEastMps: speed * Math.sin(heading),
      vNorthMps: speed * Math.cos(heading),
      haccM: Math.round(rng.nextUniform(1.5, 3.5) * 100) / 100,
      seq: 0,
    };
  });
  return {
    vehicles: scenario.entities,
    fix(index, tText) {
      const v = vehicles[index]!;
      const dtS = Number(tText) - referenceS;
      const p = frame.toGeodetic(
        v.eastM + v.vEastMps * dtS + v.haccM * rng.nextGaussian(),
        v.northM + v.vNorthMps * dtS + v.haccM * rng.nextGaussian(),
        0,
      );
      const payload = `{"t":${tText},"lat":${p.latDeg.toFixed(8)},"lon":${p.lonDeg.toFixed(8)},"hacc":${v.haccM.toFixed(2)},"seq":${v.seq++}}`;
      return { topic: v.topic, payload };
    },
  };
}
