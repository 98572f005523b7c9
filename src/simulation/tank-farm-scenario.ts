import { compileChannelFaults } from './fault-plan.js';
import type { GaussMarkovCoefficients } from './gauss-markov.js';
import { gaussMarkovCoefficients, stepGaussMarkov } from './gauss-markov.js';
import { flatString } from './flat-string.js';
import { MeasurementChannel } from './measurement-channel.js';
import type { Prng } from './prng.js';
import { createPrng } from './prng.js';
import { TICK_S, TICKS_PER_SECOND, assertScenarioOptions, entityNames, tickedScenario } from './scenario-clock.js';
import type { Scenario, ScenarioOptions, SimulatedMessage } from './simulated-message.js';

/**
 * Invented demo: three elevated water storage tanks on one site. A pump fills each tank on a
 * duty cycle, overridden by high/low level switches; draw-off empties it. Level rate ramps
 * between fill and drain with a bounded acceleration, plus a small Gauss–Markov wander.
 * The level and pressure readings are advisory demo data, not a safety function.
 */

/** Sensor streams of every tank. */
export const TANK_SENSORS = ['level', 'pressure'] as const;
/** Ultrasonic level noise, 1 sigma (m). */
export const LEVEL_SIGMA_M = 0.02;
/** Probability of a false echo per level sample. */
export const ECHO_SPIKE_PROBABILITY = 0.005;
/** False echo magnitude range (m), either sign. */
export const ECHO_SPIKE_RANGE_M: readonly [number, number] = [0.2, 0.6];
/** Base pressure transducer noise, 1 sigma (m of head). */
export const PRESSURE_SIGMA_M = 0.005;
/** Pressure bias Gauss–Markov time constant (s). */
export const PRESSURE_BIAS_TAU_S = 3600;
/** Pressure bias steady-state sigma (m of head). */
export const PRESSURE_BIAS_SIGMA_M = 0.03;

const RAMP_MPS2 = 1e-4; // 0 → 4 mm/s in 40 s: pump start and stop are slow, not steps
const RATE_WANDER_TAU_S = 60;
const RATE_WANDER_SIGMA_MPS = 2e-4;
const SWITCH_HYSTERESIS_M = 0.5;

/** Invented parameters of one tank; rates in m/s, times in s. */
export interface TankParameters {
  readonly maxLevelM: number;
  readonly initialLevelM: number;
  readonly fillMps: number;
  readonly drainMps: number;
  readonly pumpOnS: number;
  readonly pumpOffS: number;
  /** Where in its duty cycle the pump is at scenario start. */
  readonly cyclePhaseS: number;
}

/** The three named demo tanks. */
export const DEMO_TANKS: Readonly<Record<'tank-a' | 'tank-b' | 'tank-c', TankParameters>> = {
  'tank-a': { maxLevelM: 12, initialLevelM: 7.2, fillMps: 0.004, drainMps: 0.0025, pumpOnS: 180, pumpOffS: 240, cyclePhaseS: 0 },
  'tank-b': { maxLevelM: 10, initialLevelM: 4.6, fillMps: 0.003, drainMps: 0.0035, pumpOnS: 300, pumpOffS: 240, cyclePhaseS: 100 },
  'tank-c': { maxLevelM: 8, initialLevelM: 6.1, fillMps: 0.005, drainMps: 0.0018, pumpOnS: 120, pumpOffS: 300, cyclePhaseS: 200 },
};

function drawParameters(prng: Prng): TankParameters {
  const maxLevelM = prng.nextUniform(6, 14);
  const pumpOnS = prng.nextUniform(120, 360);
  const pumpOffS = prng.nextUniform(120, 360);
  return {
    maxLevelM,
    initialLevelM: maxLevelM * prng.nextUniform(0.3, 0.8),
    fillMps: prng.nextUniform(0.002, 0.006),
    drainMps: prng.nextUniform(0.0015, 0.004),
    pumpOnS,
    pumpOffS,
    cyclePhaseS: prng.nextUniform(0, pumpOnS + pumpOffS),
  };
}

interface Tank {
  readonly name: string;
  readonly p: TankParameters;
  readonly phaseTick: number;
  readonly truthTopic: string;
  readonly truthRng: Prng;
  readonly levelRng: Prng;
  readonly pressureRng: Prng;
  readonly level: MeasurementChannel;
  readonly pressure: MeasurementChannel;
  levelM: number;
  rateMps: number;
  rampedMps: number;
  wanderMps: number;
  biasM: number;
  forcedOff: boolean;
  forcedOn: boolean;
}

const rateWander: GaussMarkovCoefficients = gaussMarkovCoefficients(TICK_S, RATE_WANDER_TAU_S, RATE_WANDER_SIGMA_MPS);
const pressureBias: GaussMarkovCoefficients = gaussMarkovCoefficients(TICK_S, PRESSURE_BIAS_TAU_S, PRESSURE_BIAS_SIGMA_M);

function pumpTarget(tank: Tank, elapsedS: number): number {
  const p = tank.p;
  const high = 0.9 * p.maxLevelM;
  const low = 0.1 * p.maxLevelM;
  // Level switches latch with hysteresis so the pump does not chatter at a threshold.
  if (tank.levelM >= high) tank.forcedOff = true;
  else if (tank.levelM <= high - SWITCH_HYSTERESIS_M) tank.forcedOff = false;
  if (tank.levelM <= low) tank.forcedOn = true;
  else if (tank.levelM >= low + SWITCH_HYSTERESIS_M) tank.forcedOn = false;
  const cycle = p.pumpOnS + p.pumpOffS;
  const scheduledOn = (elapsedS + p.cyclePhaseS) % cycle < p.pumpOnS;
  const on = tank.forcedOn || (!tank.forcedOff && scheduledOn);
  return on ? p.fillMps : -p.drainMps;
}

function stepTruth(tank: Tank, elapsedS: number): void {
  const target = pumpTarget(tank, elapsedS);
  const maxChange = RAMP_MPS2 * TICK_S;
  tank.rampedMps += Math.max(-maxChange, Math.min(maxChange, target - tank.rampedMps));
  tank.wanderMps = stepGaussMarkov(tank.wanderMps, rateWander, tank.truthRng);
  tank.rateMps = tank.rampedMps + tank.wanderMps;
  tank.levelM = Math.max(0, Math.min(tank.p.maxLevelM, tank.levelM + tank.rateMps * TICK_S));
  tank.biasM = stepGaussMarkov(tank.biasM, pressureBias, tank.truthRng);
}

function createTank(name: string, index: number, root: Prng, p: TankParameters, options: ScenarioOptions): Tank {
  const rng = root.fork(name);
  const truthRng = rng.fork('truth');
  const plan = options.faults ?? [];
  const channel = (sensor: string, sigma: number, field: string, digits: number): MeasurementChannel =>
    new MeasurementChannel({
      topic: `farm/${name}/${sensor}`,
      faults: compileChannelFaults(plan, name, sensor),
      prng: rng.fork(`faults/${sensor}`),
      valueCount: 1,
      planar: false,
      sigmaOf: () => sigma,
      format: (t, v, seq) => `{"t":${t},"${field}":${v[0]!.toFixed(digits)},"seq":${seq}}`,
    });
  const tank: Tank = {
    name,
    p,
    phaseTick: index % TICKS_PER_SECOND,
    truthTopic: `sim/truth/farm/${name}`,
    truthRng,
    levelRng: rng.fork('level'),
    pressureRng: rng.fork('pressure'),
    level: channel('level', LEVEL_SIGMA_M, 'level_m', 3),
    pressure: channel('pressure', PRESSURE_SIGMA_M, 'head_m', 4),
    levelM: p.initialLevelM,
    rateMps: 0,
    rampedMps: 0,
    wanderMps: RATE_WANDER_SIGMA_MPS * truthRng.nextGaussian(),
    // Start in steady state so the bias statistics hold from the first sample.
    biasM: PRESSURE_BIAS_SIGMA_M * truthRng.nextGaussian(),
    forcedOff: false,
    forcedOn: false,
  };
  tank.rampedMps = pumpTarget(tank, 0); // already running: no start-up transient at t = 0
  tank.rateMps = tank.rampedMps + tank.wanderMps;
  return tank;
}

/** Builds the tank-farm scenario (see `ScenarioOptions`); throws RangeError on bad options. */
export function createTankFarmScenario(options: ScenarioOptions): Scenario {
  const names = entityNames(Object.keys(DEMO_TANKS), 'tank', options.entities);
  const plan = options.faults ?? [];
  assertScenarioOptions('tank-farm', options, plan, names, TANK_SENSORS);
  const root = createPrng(options.seed).fork('tank-farm');
  const tanks = names.map((name, i) => {
    const demo = options.entities === undefined ? DEMO_TANKS[name as keyof typeof DEMO_TANKS] : undefined;
    return createTank(name, i, root, demo ?? drawParameters(root.fork(name).fork('parameters')), options);
  });
  const { startTimeS } = options;
  const values = new Float64Array(1);

  const runTick = (k: number, out: SimulatedMessage[]): void => {
    const elapsedS = k / TICKS_PER_SECOND;
    const epochS = startTimeS + elapsedS;
    const tText = epochS.toFixed(3);
    for (const tank of tanks) {
      if (k > 0) stepTruth(tank, elapsedS);
      if (k % TICKS_PER_SECOND === tank.phaseTick) {
        out.push({
          topic: tank.truthTopic,
          payload: flatString(`{"t":${tText},"level":${tank.levelM.toFixed(6)},"level_rate":${tank.rateMps.toFixed(7)},"pressure_bias":${tank.biasM.toFixed(6)}}`),
          eventTimeS: epochS,
          publishTimeS: epochS,
          kind: 'truth',
        });
        values[0] = tank.levelM + LEVEL_SIGMA_M * tank.levelRng.nextGaussian() + echoSpike(tank.levelRng);
        tank.level.emit(out, elapsedS, epochS, tText, values);
      }
      values[0] = tank.levelM + tank.biasM + PRESSURE_SIGMA_M * tank.pressureRng.nextGaussian();
      tank.pressure.emit(out, elapsedS, epochS, tText, values);
    }
  };

  return tickedScenario('tank-farm', names, startTimeS, runTick);
}

/** A false echo of the ultrasonic sensor: usually 0, occasionally ±0.2–0.6 m. */
function echoSpike(prng: Prng): number {
  if (prng.nextFloat() >= ECHO_SPIKE_PROBABILITY) return 0;
  const magnitude = prng.nextUniform(ECHO_SPIKE_RANGE_M[0], ECHO_SPIKE_RANGE_M[1]);
  return prng.nextFloat() < 0.5 ? -magnitude : magnitude;
}
