/**
 * The invented tank farm the integration tests feed the daemon: an estimator config like the
 * shipped tank-farm example (level with its rate, and a pressure transmitter with a wandering
 * bias), deterministic readings for tank-a..c, and the reference the daemon must match: the
 * same estimator built with buildEstimatorRuntime and fed the same sequence in-process.
 */
import type { EstimatorConfig } from '../../src/config/config-schema.js';
import type { DeepReadonly } from '../../src/config/deep-freeze.js';
import { buildEstimatorRuntime } from '../../src/engine/estimator-runtime.js';
import type { IngestVerdict, Track } from '../../src/estimation/track.js';

/** The tanks of the demo farm. */
export type TankName = 'tank-a' | 'tank-b' | 'tank-c';

/** The tank estimator as written in a config file; `overrides` replace top-level fields. */
export function tankEstimator(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    name: 'tanks',
    model: {
      type: 'composite',
      blocks: [
        { type: 'constant-velocity', axes: ['level'], q: 1.0e-6 },
        { type: 'gauss-markov', state: 'pressure_bias', tauS: 3600, sigma: 0.03 },
      ],
    },
    filter: { kind: 'kf' },
    prior: { sigma: { level_rate: 0.01, pressure_bias: 0.03 } },
    gate: { probability: 0.99 },
    history: { horizonS: 600, maxEntries: 256 },
    // QoS 1 so that the test's subscriber receives every estimate the daemon publishes.
    publish: { topic: 'statecast/{estimator}/{entity}/estimate', qos: 1 },
    sensors: {
      level: {
        topic: 'farm/{tank}/level',
        decode: { format: 'json', values: ['level_m'], time: 't', sequence: 'seq' },
        measurement: { type: 'linear', reads: { level: 1 }, sigma: 0.02 },
      },
      pressure: {
        topic: 'farm/{tank}/pressure',
        decode: { format: 'json', values: ['head_m'], time: 't', sequence: 'seq' },
        measurement: { type: 'linear', reads: { level: 1, pressure_bias: 1 }, sigma: 0.005 },
      },
    },
    ...overrides,
  };
}

/** One reading as a field device would send it. */
export interface TankReading {
  readonly entity: TankName;
  readonly sensor: 'level' | 'pressure';
  readonly topic: string;
  readonly value: number;
  /** Event time, epoch seconds. */
  readonly tS: number;
  readonly seq: number;
  readonly payload: string;
}

/** A level or pressure reading with its topic and JSON payload. */
export function tankReading(entity: TankName, sensor: 'level' | 'pressure', value: number, tS: number, seq: number): TankReading {
  const field = sensor === 'level' ? 'level_m' : 'head_m';
  return { entity, sensor, topic: `farm/${entity}/${sensor}`, value, tS, seq, payload: JSON.stringify({ [field]: value, t: tS, seq }) };
}

/** Options of tankReadings. */
export interface TankReadingOptions {
  readonly entity: TankName;
  readonly count: number;
  /** Event time of the first reading, epoch seconds (keep it in the past: the daemon refuses the future). */
  readonly startS: number;
  /** Seconds between readings. Default 0.5. */
  readonly stepS?: number;
  /** Every `levelEvery`-th reading is a level, the others pressure. Default 3. */
  readonly levelEvery?: number;
  readonly firstSeq?: number;
  readonly seed?: number;
}

/**
 * A slowly filling tank (4.2 m, +0.5 mm/s) seen by both sensors, with noise at half each sensor's
 * σ from a fixed-seed generator, so every reading passes the gate and runs repeat exactly.
 */
export function tankReadings(options: TankReadingOptions): TankReading[] {
  const stepS = options.stepS ?? 0.5;
  const levelEvery = options.levelEvery ?? 3;
  const firstSeq = options.firstSeq ?? 0;
  let state = (options.seed ?? 7) >>> 0 || 1;
  const noise = (): number => {
    // xorshift32: enough for test noise, identical on every run
    state ^= state << 13;
    state >>>= 0;
    state ^= state >>> 17;
    state ^= state << 5;
    state >>>= 0;
    return (state / 0xffffffff) * 2 - 1;
  };
  const out: TankReading[] = [];
  for (let i = 0; i < options.count; i++) {
    const seq = firstSeq + i;
    const tS = Math.round((options.startS + seq * stepS) * 1000) / 1000;
    const level = 4.2 + 0.0005 * (seq * stepS);
    const isLevel = seq % levelEvery === 0;
    const value = isLevel ? level + 0.01 * noise() : level + 0.012 + 0.0025 * noise();
    out.push(tankReading(options.entity, isLevel ? 'level' : 'pressure', Math.round(value * 1e6) / 1e6, tS, seq));
  }
  return out;
}

/** What the core made of one reading. */
export interface ReferenceStep {
  readonly reading: TankReading;
  readonly verdict: IngestVerdict;
  readonly accepted: boolean;
  /** State after the reading (unchanged when rejected). */
  readonly state: Record<string, number>;
  readonly sigma: Record<string, number>;
  readonly tS: number;
}

/** The in-process estimator for one config: a track per tank, fed like the daemon feeds its own. */
export class ReferenceEstimator {
  private readonly runtime;
  private readonly tracks = new Map<string, Track>();

  constructor(config: DeepReadonly<EstimatorConfig>) {
    this.runtime = buildEstimatorRuntime(config);
  }

  /** The track of an entity (created on first use, as the daemon does). */
  track(entity: string): Track {
    let track = this.tracks.get(entity);
    if (track === undefined) {
      track = this.runtime.estimator.createTrack();
      this.tracks.set(entity, track);
    }
    return track;
  }

  /** Offers one reading; the clock is the reading's own time, so no stamp counts as future. */
  ingest(reading: TankReading): ReferenceStep {
    const track = this.track(reading.entity);
    const sensor = this.runtime.estimator.sensorIndex(reading.sensor);
    const verdict = track.ingest(sensor, [reading.value], null, reading.tS, reading.tS);
    const accepted = verdict === 'applied' || verdict === 'initialized' || verdict === 'late-applied';
    return { reading, verdict, accepted, ...stateOf(this.runtime.estimator.settings.process.stateNames, track) };
  }

  /** Feeds a whole sequence. */
  run(readings: readonly TankReading[]): ReferenceStep[] {
    return readings.map((r) => this.ingest(r));
  }
}

/** A track's x and σ by state name, and its time. */
export function stateOf(names: readonly string[], track: Track): { state: Record<string, number>; sigma: Record<string, number>; tS: number } {
  const n = names.length;
  const state: Record<string, number> = {};
  const sigma: Record<string, number> = {};
  names.forEach((name, i) => {
    state[name] = track.x[i]!;
    sigma[name] = Math.sqrt(Math.max(0, track.P[i * n + i]!));
  });
  return { state, sigma, tS: track.tS };
}
