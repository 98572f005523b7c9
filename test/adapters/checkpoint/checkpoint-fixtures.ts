import { Estimator } from '../../../src/estimation/estimator.js';
import { ConstantVelocityModel } from '../../../src/estimation/models/constant-velocity-model.js';
import { LinearMeasurement } from '../../../src/estimation/measurements/linear-measurement.js';
import type { Track } from '../../../src/estimation/track.js';
import { nodeCheckpointFileSystem, type CheckpointFileSystem } from '../../../src/adapters/checkpoint/checkpoint-file-system.js';

/** The vehicle yard's tugs: plane position and velocity from a position fix (σ = 3 m). */
export function yardEstimator(): Estimator {
  return new Estimator({
    process: new ConstantVelocityModel({ spectralDensity: 0.5 }),
    sensors: [{ name: 'fix', model: new LinearMeasurement({ C: [1, 0, 0, 0, 0, 1, 0, 0], dim: 2, stateDim: 4, Rv: [9, 0, 0, 9] }) }],
    filter: 'kf',
    gateProbability: null,
    futureToleranceS: 1e9,
  });
}

/** The tank farm's tanks: fill level (m) and its rate from a level gauge (σ = 1 cm). */
export function tankEstimator(): Estimator {
  return new Estimator({
    process: new ConstantVelocityModel({ positionNames: ['level'], velocityNames: ['rate'], spectralDensity: 1e-6 }),
    sensors: [{ name: 'gauge', model: new LinearMeasurement({ C: [1, 0], dim: 1, stateDim: 2, Rv: [1e-4] }) }],
    filter: 'kf',
    gateProbability: null,
    futureToleranceS: 1e9,
  });
}

export function estimatorsByName(): Map<string, Estimator> {
  return new Map([
    ['yard', yardEstimator()],
    ['tanks', tankEstimator()],
  ]);
}

/** tug-01..03 and tank-a..c, each fed a few seconds of readings (shifted by `seed`). */
export function someTracks(estimators: Map<string, Estimator>, seed = 0): Map<string, Map<string, Track>> {
  const yard = new Map<string, Track>();
  ['tug-01', 'tug-02', 'tug-03'].forEach((entity, k) => {
    const track = estimators.get('yard')!.createTrack();
    for (let t = 0; t < 12; t++) track.ingest(0, [3 * t + k + seed + Math.sin(t), -t + 2 * Math.cos(t)], null, 100 + t, 1e12);
    yard.set(entity, track);
  });
  const tanks = new Map<string, Track>();
  ['tank-a', 'tank-b', 'tank-c'].forEach((entity, k) => {
    const track = estimators.get('tanks')!.createTrack();
    for (let t = 0; t < 8; t++) track.ingest(0, [2 + 0.5 * k + 0.001 * t + seed + 0.003 * Math.sin(t)], null, 60 * t, 1e12);
    tanks.set(entity, track);
  });
  return new Map([
    ['yard', yard],
    ['tanks', tanks],
  ]);
}

/** A Node system error as fs/promises rejects with. */
export function systemError(code: string, path: string): NodeJS.ErrnoException {
  return Object.assign(new Error(`${code}: simulated failure, '${path}'`), { code, path });
}

/** Faults to inject: the errno code each step fails with. `write` first writes half the bytes. */
export interface Faults {
  readonly createExclusive?: string;
  readonly write?: string;
  readonly rename?: string;
}

/** Node's file system with the given steps failing, as a full disk or a read-only mount would. */
export function faultyFileSystem(faults: Faults): CheckpointFileSystem {
  const real = nodeCheckpointFileSystem;
  return {
    ...real,
    async createExclusive(path) {
      if (faults.createExclusive !== undefined) throw systemError(faults.createExclusive, path);
      const handle = await real.createExclusive(path);
      const writeFault = faults.write;
      if (writeFault === undefined) return handle;
      return {
        sync: () => handle.sync(),
        close: () => handle.close(),
        async writeFile(data) {
          await handle.writeFile(data.subarray(0, data.length >> 1));
          throw systemError(writeFault, path);
        },
      };
    },
    async rename(from, to) {
      if (faults.rename !== undefined) throw systemError(faults.rename, to);
      await real.rename(from, to);
    },
  };
}

/** A pino-like logger that keeps its warnings. */
export function warningsLogger(): { warn(fields: object, message: string): void; readonly warnings: { fields: object; message: string }[] } {
  const warnings: { fields: object; message: string }[] = [];
  return { warn: (fields, message) => warnings.push({ fields, message }), warnings };
}
