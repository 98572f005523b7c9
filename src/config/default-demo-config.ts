/**
 * The Quick-start configuration, built in code: the embedded broker, the simulator playing both
 * demo scenarios, and their two estimators. `config/tank-farm.yaml` and
 * `config/vehicle-yard.yaml` carry the same estimators with comments; a test keeps them equal.
 *
 * The estimates are advisory and are not a safety function: do not use them as the only input
 * to the control of water systems or vehicles; defer to local codes and licensed practice.
 */
import { ConfigError } from './config-error.js';
import type { Config, ConfigInput } from './config-schema.js';
import type { DeepReadonly } from './deep-freeze.js';
import { parseConfig, type Env } from './load-config.js';

type EstimatorInput = ConfigInput['estimators'][number];

/** The tank-farm estimator: level and its rate from a level gauge and a pressure sensor with a slowly drifting bias. */
export function tanksEstimatorInput(): EstimatorInput {
  return {
    name: 'tanks',
    model: {
      type: 'composite',
      blocks: [
        { type: 'constant-velocity', axes: ['level'], q: 1e-6 },
        { type: 'gauss-markov', state: 'pressure_bias', tauS: 3600, sigma: 0.03 },
      ],
    },
    filter: { kind: 'kf' },
    prior: { sigma: { level_rate: 0.01, pressure_bias: 0.03 } },
    gate: { probability: 0.99 },
    smoothing: { lagSteps: 10 },
    publish: { smoothedTopic: 'statecast/{estimator}/{entity}/smoothed' },
    sensors: {
      level: {
        topic: 'farm/{tank}/level',
        expectedPeriodS: 1,
        decode: { format: 'json', values: ['level_m'], time: 't', sequence: 'seq' },
        measurement: { type: 'linear', reads: { level: 1 }, sigma: 0.02 },
      },
      pressure: {
        topic: 'farm/{tank}/pressure',
        expectedPeriodS: 0.1,
        decode: { format: 'json', values: ['head_m'], time: 't', sequence: 'seq' },
        measurement: { type: 'linear', reads: { level: 1, pressure_bias: 1 }, sigma: 0.005 },
      },
    },
  };
}

/** The vehicle-yard estimator: planar position and velocity from GNSS fixes and wheel speed. */
export function yardEstimatorInput(): EstimatorInput {
  return {
    name: 'yard',
    // q from a replay of a simulator recording against ground truth: mean NEES 4.7 for the 4
    // states (4 expected) at q = 5; q = 0.5 gave 30, an over-confident filter.
    model: { type: 'constant-velocity', axes: ['east', 'north'], q: 5 },
    // Wheel speed is the norm of the velocity: at rest or with velocity still unknown its
    // linearization is degenerate (a zero Jacobian row), which the unscented update handles.
    filter: { kind: 'ukf' },
    prior: { sigma: { v_east: 5, v_north: 5 } },
    // Fixes sent over the cellular link arrive in bursts up to 30 s late; at 11 readings a
    // second, 60 s of history needs about 660 entries.
    history: { horizonS: 60, maxEntries: 700 },
    // At 10 Hz the wheel sees the constant-velocity model's roughness at short time scales (real
    // tractors accelerate smoothly), so its NIS runs low while the GNSS NIS stays consistent;
    // a q small enough to fix that makes the filter lag in turns. Low NIS is not flagged here.
    health: { flagLowNis: false },
    sensors: {
      gnss: {
        topic: 'yard/{vehicle}/gnss',
        expectedPeriodS: 1,
        decode: { format: 'json', values: ['lat', 'lon'], time: 't', sigma: 'hacc', sequence: 'seq' },
        measurement: {
          type: 'geodetic',
          origin: { latDeg: 51.95, lonDeg: 4.05, heightM: 0 },
          position: ['east', 'north'],
          sigmaM: 3,
        },
      },
      wheel: {
        topic: 'yard/{vehicle}/wheel',
        expectedPeriodS: 0.1,
        decode: { format: 'json', values: ['speed_mps'], time: 't', sequence: 'seq' },
        measurement: { type: 'speed', velocity: ['v_east', 'v_north'], sigma: 0.1 },
      },
    },
  };
}

/** The Quick-start configuration as written: embedded broker, simulator on, both demo estimators. */
export function demoConfigInput(): ConfigInput {
  return {
    simulator: { enabled: true, scenarios: ['tank-farm', 'vehicle-yard'] },
    estimators: [tanksEstimatorInput(), yardEstimatorInput()],
  };
}

/**
 * The Quick-start configuration, validated and deep-frozen, with `env` overrides applied.
 * Throws ConfigError only if an override is invalid (the built-in part is tested).
 */
export function defaultDemoConfig(env: Env = {}): DeepReadonly<Config> {
  const result = parseConfig(demoConfigInput(), env);
  if (!result.ok) throw new ConfigError(result.issues, '(built-in demo)');
  return result.config;
}
