import type { FaultPlan } from './fault-plan.js';
import { compileChannelFaults } from './fault-plan.js';
import { gaussMarkovCoefficients, stepGaussMarkov } from './gauss-markov.js';
import { flatString } from './flat-string.js';
import { MeasurementChannel } from './measurement-channel.js';
import type { Prng } from './prng.js';
import { createPrng } from './prng.js';
import { TICK_S, TICKS_PER_SECOND, assertScenarioOptions, entityNames, tickedScenario } from './scenario-clock.js';
import type { Scenario, ScenarioOptions, SimulatedMessage } from './simulated-message.js';
import type { LocalFrame } from './yard-geodesy.js';
import { YARD_ORIGIN, createLocalFrame } from './yard-geodesy.js';
import { YardVehicleMotion } from './yard-route.js';

/**
 * Invented demo: twelve electric tow tractors in a 600 m × 400 m distribution yard whose
 * south-west corner is at 51.9500° N, 4.0500° E, 0 m (WGS-84). Each reports GNSS fixes at
 * 1 Hz and wheel speed at 10 Hz over a cellular link that stores and forwards: during
 * outages of 5–30 s the fixes are held and then released together, out of order.
 * Positions are advisory demo data, not a safety function for vehicle control.
 */

/** Sensor streams of every tractor. */
export const YARD_SENSORS = ['gnss', 'wheel'] as const;
/** The twelve named demo tractors. */
export const DEMO_VEHICLES: readonly string[] = Array.from({ length: 12 }, (_, i) => `tug-${String(i + 1).padStart(2, '0')}`);
/** Wheel-speed noise, 1 sigma (m/s). Additive Gaussian, so a stopped tractor may read slightly negative. */
export const WHEEL_SIGMA_MPS = 0.1;
/**
 * Range of the reported horizontal accuracy `hacc` (m). It is the 1-sigma of each horizontal
 * axis: east and north errors are independent N(0, hacc²), so a filter should use R = hacc²·I.
 */
export const HACC_RANGE_M: readonly [number, number] = [1.5, 4];

/**
 * The yard's own faults, applied unless `defaultFaults: false`: random store-and-forward
 * outages of the GNSS stream, on average one every 180 s per tractor, 5–30 s long.
 */
export const YARD_DEFAULT_FAULTS: FaultPlan = [
  { kind: 'lateBurst', entity: '*', sensor: 'gnss', meanIntervalS: 180, minDurationS: 5, maxDurationS: 30 },
];

// Reported accuracy wanders slowly (multipath near container stacks changes as a tractor moves).
const haccWander = gaussMarkovCoefficients(1, 120, 1);
const HACC_MEAN_M = 2.5;
const HACC_SPREAD_M = 0.6;

interface Vehicle {
  readonly motion: YardVehicleMotion;
  readonly phaseTick: number;
  readonly truthTopic: string;
  readonly gnssRng: Prng;
  readonly wheelRng: Prng;
  readonly gnss: MeasurementChannel;
  readonly wheel: MeasurementChannel;
  haccState: number;
}

function gnssFormat(frame: LocalFrame) {
  return (t: string, v: Float64Array, seq: number): string => {
    const p = frame.toGeodetic(v[0]!, v[1]!, 0);
    return `{"t":${t},"lat":${p.latDeg.toFixed(8)},"lon":${p.lonDeg.toFixed(8)},"hacc":${v[2]!.toFixed(2)},"seq":${seq}}`;
  };
}

function createVehicle(name: string, index: number, root: Prng, plan: FaultPlan, frame: LocalFrame): Vehicle {
  const rng = root.fork(name);
  const gnssRng = rng.fork('gnss');
  return {
    motion: new YardVehicleMotion(rng.fork('route')),
    phaseTick: index % TICKS_PER_SECOND,
    truthTopic: `sim/truth/yard/${name}`,
    gnssRng,
    wheelRng: rng.fork('wheel'),
    gnss: new MeasurementChannel({
      topic: `yard/${name}/gnss`,
      faults: compileChannelFaults(plan, name, 'gnss'),
      prng: rng.fork('faults/gnss'),
      valueCount: 3,
      planar: true,
      sigmaOf: (v) => v[2]!,
      format: gnssFormat(frame),
    }),
    wheel: new MeasurementChannel({
      topic: `yard/${name}/wheel`,
      faults: compileChannelFaults(plan, name, 'wheel'),
      prng: rng.fork('faults/wheel'),
      valueCount: 1,
      planar: false,
      sigmaOf: () => WHEEL_SIGMA_MPS,
      format: (t, v, seq) => `{"t":${t},"speed_mps":${v[0]!.toFixed(3)},"seq":${seq}}`,
    }),
    haccState: gnssRng.nextGaussian(),
  };
}

/** Builds the vehicle-yard scenario (see `ScenarioOptions`); throws RangeError on bad options. */
export function createVehicleYardScenario(options: ScenarioOptions): Scenario {
  const names = entityNames(DEMO_VEHICLES, 'tug', options.entities);
  const userPlan = options.faults ?? [];
  assertScenarioOptions('vehicle-yard', options, userPlan, names, YARD_SENSORS);
  const plan = options.defaultFaults === false ? userPlan : [...YARD_DEFAULT_FAULTS, ...userPlan];
  const frame = createLocalFrame(YARD_ORIGIN);
  const root = createPrng(options.seed).fork('vehicle-yard');
  const vehicles = names.map((name, i) => createVehicle(name, i, root, plan, frame));
  const { startTimeS } = options;
  const wheel = new Float64Array(1);
  const fix = new Float64Array(3);

  const sampleGnss = (v: Vehicle, out: SimulatedMessage[], elapsedS: number, epochS: number, tText: string): void => {
    v.haccState = stepGaussMarkov(v.haccState, haccWander, v.gnssRng);
    const raw = HACC_MEAN_M + HACC_SPREAD_M * v.haccState;
    // Noise is drawn at the accuracy as reported (rounded), so the payload states it exactly.
    const hacc = Math.round(100 * Math.min(HACC_RANGE_M[1], Math.max(HACC_RANGE_M[0], raw))) / 100;
    fix[0] = v.motion.eastM + hacc * v.gnssRng.nextGaussian();
    fix[1] = v.motion.northM + hacc * v.gnssRng.nextGaussian();
    fix[2] = hacc;
    v.gnss.emit(out, elapsedS, epochS, tText, fix);
  };

  const truth = (v: Vehicle, epochS: number, tText: string): SimulatedMessage => {
    const m = v.motion;
    const p = frame.toGeodetic(m.eastM, m.northM, 0);
    return {
      topic: v.truthTopic,
      payload: flatString(`{"t":${tText},"east":${m.eastM.toFixed(4)},"north":${m.northM.toFixed(4)},"v_east":${m.vEastMps.toFixed(4)},"v_north":${m.vNorthMps.toFixed(4)},"lat":${p.latDeg.toFixed(9)},"lon":${p.lonDeg.toFixed(9)}}`),
      eventTimeS: epochS,
      publishTimeS: epochS,
      kind: 'truth',
    };
  };

  const runTick = (k: number, out: SimulatedMessage[]): void => {
    const elapsedS = k / TICKS_PER_SECOND;
    const epochS = startTimeS + elapsedS;
    const tText = epochS.toFixed(3);
    for (const v of vehicles) {
      if (k > 0) v.motion.step(TICK_S);
      if (k % TICKS_PER_SECOND === v.phaseTick) {
        out.push(truth(v, epochS, tText));
        sampleGnss(v, out, elapsedS, epochS, tText);
      }
      wheel[0] = v.motion.speedMps + WHEEL_SIGMA_MPS * v.wheelRng.nextGaussian();
      v.wheel.emit(out, elapsedS, epochS, tText, wheel);
    }
  };

  return tickedScenario('vehicle-yard', names, startTimeS, runTick);
}
