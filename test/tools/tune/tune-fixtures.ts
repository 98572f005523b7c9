/**
 * Simulated recordings with known noise for the tuning tests, drawn from the project's own
 * seeded PRNG: a temperature probe in tank-a (a scalar random walk seen through white noise)
 * and the level of tank-b (constant velocity, white-noise acceleration, seen through white
 * noise). Payloads are JSON with their own time stamps, one sample per second.
 */
import { formatConfigIssues } from '../../../src/config/config-error.js';
import type { ConfigInput } from '../../../src/config/config-schema.js';
import { parseConfig } from '../../../src/config/load-config.js';
import { buildEstimatorRuntime } from '../../../src/engine/estimator-runtime.js';
import { createPrng } from '../../../src/simulation/prng.js';
import { decodeRecording, type RecordedMessage } from '../../../src/tools/tune/entity-measurements.js';
import { fitNoiseParameters, type NoiseFit } from '../../../src/tools/tune/noise-fit.js';
import { buildTuneProblem, type TuneProblem } from '../../../src/tools/tune/tune-problem.js';

/** One estimator as written in a config. */
export type EstimatorInput = ConfigInput['estimators'][number];

/** Epoch ms of the first sample (2026-01-01T00:00:00Z). */
export const T0_MS = 1_767_225_600_000;

const encoder = new TextEncoder();

function message(topic: string, k: number, field: string, value: number): RecordedMessage {
  const t = T0_MS + k * 1000;
  return { t, topic, payload: encoder.encode(JSON.stringify({ t: t / 1000, [field]: value })) };
}

/**
 * `count` readings of tank-a's temperature probe at 1 Hz: x(k+1) = x(k) + w, var w = q·1 s
 * (q in °C²/s), reading x + v with σ (°C).
 */
export function probeRecording(seed: string, q: number, sigma: number, count: number): RecordedMessage[] {
  const prng = createPrng(seed).fork('tank-a/temp');
  const out: RecordedMessage[] = [];
  let x = 18;
  for (let k = 0; k < count; k++) {
    if (k > 0) x += Math.sqrt(q) * prng.nextGaussian();
    out.push(message('farm/tank-a/temp', k, 'temp_c', x + sigma * prng.nextGaussian()));
  }
  return out;
}

/**
 * `count` readings of tank-b's level at 1 Hz from the exact discretization of white-noise
 * acceleration with spectral density q (m²/s³): Q = q·[[T³/3, T²/2], [T²/2, T]] (REFERENCE-CHECKS,
 * CWNA), sampled through its Cholesky factor; reading level + v with σ (m).
 */
export function levelRecording(seed: string, q: number, sigma: number, count: number): RecordedMessage[] {
  const prng = createPrng(seed).fork('tank-b/level');
  const out: RecordedMessage[] = [];
  // Cholesky of Q for T = 1: [[1/3, 1/2], [1/2, 1]]·q.
  const l11 = Math.sqrt(q / 3);
  const l21 = (q / 2) / l11;
  const l22 = Math.sqrt(q - l21 * l21);
  let level = 4;
  let rate = 0;
  for (let k = 0; k < count; k++) {
    if (k > 0) {
      const a = prng.nextGaussian();
      const b = prng.nextGaussian();
      level += rate + l11 * a;
      rate += l21 * a + l22 * b;
    }
    out.push(message('farm/tank-b/level', k, 'level_m', level + sigma * prng.nextGaussian()));
  }
  return out;
}

/** The probe's estimator with q and σ free, configured at the given values. */
export function probeEstimator(q: number, sigma: number): EstimatorInput {
  return {
    name: 'probes',
    model: { type: 'random-walk', states: ['temp'], q },
    filter: { kind: 'kf' },
    sensors: {
      temp: {
        topic: 'farm/{tank}/temp',
        decode: { format: 'json', values: ['temp_c'], time: 't' },
        measurement: { type: 'linear', reads: { temp: 1 }, sigma },
      },
    },
    tune: { free: [{ path: 'model.q' }, { path: 'sensors.temp.measurement.sigma' }] },
  };
}

/** The level estimator (1-D constant velocity) with q and σ free, configured at the given values. */
export function levelEstimator(q: number, sigma: number): EstimatorInput {
  return {
    name: 'levels',
    model: { type: 'constant-velocity', axes: ['level'], q },
    filter: { kind: 'kf' },
    sensors: {
      level: {
        topic: 'farm/{tank}/level',
        decode: { format: 'json', values: ['level_m'], time: 't' },
        measurement: { type: 'linear', reads: { level: 1 }, sigma },
      },
    },
    tune: { free: [{ path: 'model.q' }, { path: 'sensors.level.measurement.sigma' }] },
  };
}

/** Runs a fit to the end (no progress, no abort). */
export function fitToEnd(problem: TuneProblem): NoiseFit {
  const steps = fitNoiseParameters(problem);
  for (;;) {
    const next = steps.next();
    if (next.done === true) return next.value;
  }
}

/** Validates one estimator input and prepares its tuning problem on `messages`. */
export function problemFor(input: EstimatorInput, messages: readonly RecordedMessage[], starts?: ReadonlyMap<string, number>): TuneProblem {
  const parsed = parseConfig({ estimators: [input] }, {});
  if (!parsed.ok) throw new Error(formatConfigIssues(parsed.issues));
  const config = parsed.config.estimators[0]!;
  const built = buildTuneProblem(config, decodeRecording(buildEstimatorRuntime(config), messages), starts);
  if (!built.ok) throw new Error(formatConfigIssues(built.issues));
  return built.problem;
}
