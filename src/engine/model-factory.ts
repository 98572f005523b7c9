/**
 * Turns validated config into the core's process and measurement models. This is the one place
 * that knows which config `type` maps to which model class: it runs once per estimator at start
 * (or reload), never per measurement.
 */
import type { DeepReadonly } from '../config/deep-freeze.js';
import type { MeasurementConfig, ModelBlockConfig, ModelConfig } from '../config/config-schema.js';
import { CompositeModel } from '../estimation/models/composite-model.js';
import { ConstantAccelerationModel } from '../estimation/models/constant-acceleration-model.js';
import { ConstantVelocityModel } from '../estimation/models/constant-velocity-model.js';
import { ContinuousModel } from '../estimation/models/continuous-model.js';
import { DiscreteModel } from '../estimation/models/discrete-model.js';
import { GaussMarkovModel } from '../estimation/models/gauss-markov-model.js';
import { RandomWalkModel } from '../estimation/models/random-walk-model.js';
import type { ProcessModel } from '../estimation/models/process-model.js';
import { GeodeticMeasurement } from '../estimation/measurements/geodetic-measurement.js';
import { HeadingMeasurement } from '../estimation/measurements/heading-measurement.js';
import { LinearMeasurement } from '../estimation/measurements/linear-measurement.js';
import type { MeasurementModel } from '../estimation/measurements/measurement-model.js';
import { RangeBearingMeasurement } from '../estimation/measurements/range-bearing-measurement.js';
import { SpeedMeasurement } from '../estimation/measurements/speed-measurement.js';

type Rows = readonly (readonly number[])[];

/** The process model for a config model (a composite or a single block). */
export function buildProcessModel(model: DeepReadonly<ModelConfig>): ProcessModel {
  if (model.type === 'composite') {
    const blocks = model.blocks.map((b) => buildBlock(b));
    return blocks.length === 1 ? blocks[0]! : new CompositeModel(blocks);
  }
  return buildBlock(model);
}

function buildBlock(block: DeepReadonly<ModelBlockConfig>): ProcessModel {
  switch (block.type) {
    case 'random-walk':
      return new RandomWalkModel({ stateNames: block.states, spectralDensity: block.q });
    case 'constant-velocity':
      return new ConstantVelocityModel({ positionNames: block.axes, velocityNames: block.rateNames, spectralDensity: block.q });
    case 'constant-acceleration':
      return new ConstantAccelerationModel({
        positionNames: block.axes,
        velocityNames: block.rateNames,
        accelerationNames: block.accelerationNames,
        spectralDensity: block.q,
      });
    case 'gauss-markov':
      return new GaussMarkovModel({ stateNames: [block.state], tauS: block.tauS, sigma: block.sigma });
    case 'continuous':
      return new ContinuousModel({ F: block.F as Rows, G: block.G as Rows, Qc: block.Qc as Rows, stateNames: block.states });
    case 'discrete':
      return new DiscreteModel({
        A: block.A as Rows,
        Q: block.Q as Rows,
        stepS: block.stepS,
        stateNames: block.states,
        ...(block.B === undefined ? {} : { B: block.B as Rows }),
        ...(block.G === undefined ? {} : { G: block.G as Rows }),
      });
    default: {
      const never: never = block;
      throw new Error(`unknown model block ${JSON.stringify(never)}`);
    }
  }
}

/** The measurement model of one sensor, reading states of `stateNames` (the process model's order). */
export function buildMeasurementModel(m: DeepReadonly<MeasurementConfig>, stateNames: readonly string[]): MeasurementModel {
  const n = stateNames.length;
  const index = (name: string): number => {
    const i = stateNames.indexOf(name);
    if (i < 0) throw new Error(`state "${name}" is not in the model (${stateNames.join(', ')})`);
    return i;
  };
  switch (m.type) {
    case 'linear':
      return buildLinear(m, stateNames, index);
    case 'geodetic':
      return new GeodeticMeasurement({
        stateDim: n,
        positionIndices: m.position.map(index),
        origin: { latDeg: m.origin.latDeg, lonDeg: m.origin.lonDeg, hM: m.origin.heightM },
        withHeight: m.withHeight,
        horizontalSigmaM: m.sigmaM,
        ...(m.withHeight ? { verticalSigmaM: m.sigmaM * 1.5 } : {}),
      });
    case 'range-bearing':
      return new RangeBearingMeasurement({
        stateDim: n,
        positionIndices: m.position.map(index),
        siteEastM: m.site.east,
        siteNorthM: m.site.north,
        rangeSigmaM: m.sigmaRangeM,
        bearingSigmaRad: m.sigmaBearingRad,
      });
    case 'speed':
      return new SpeedMeasurement({ stateDim: n, velocityIndices: m.velocity.map(index), speedSigmaMps: m.sigma });
    case 'heading':
      return new HeadingMeasurement({ stateDim: n, velocityIndices: m.velocity.map(index), headingSigmaRad: m.sigmaRad });
    default: {
      const never: never = m;
      throw new Error(`unknown measurement ${JSON.stringify(never)}`);
    }
  }
}

function buildLinear(
  m: DeepReadonly<Extract<MeasurementConfig, { type: 'linear' }>>,
  stateNames: readonly string[],
  index: (name: string) => number,
): LinearMeasurement {
  const n = stateNames.length;
  let C: number[];
  let dim: number;
  if (m.reads !== undefined) {
    dim = 1;
    C = new Array<number>(n).fill(0);
    for (const [name, coefficient] of Object.entries(m.reads)) C[index(name)] = coefficient;
  } else {
    const rows = m.C as Rows;
    dim = rows.length;
    C = rows.flatMap((r) => [...r]);
  }
  const noiseDim = m.D === undefined ? dim : (m.D[0]?.length ?? dim);
  let Rv: number[];
  if (m.R !== undefined) {
    Rv = (m.R as Rows).flatMap((r) => [...r]);
  } else {
    const sigma = m.sigma!;
    const list = typeof sigma === 'number' ? new Array<number>(noiseDim).fill(sigma) : [...sigma];
    Rv = new Array<number>(noiseDim * noiseDim).fill(0);
    list.forEach((s, i) => { Rv[i * noiseDim + i] = s * s; });
  }
  return new LinearMeasurement({
    C,
    dim,
    stateDim: n,
    Rv,
    noiseDim,
    ...(m.D === undefined ? {} : { D: (m.D as Rows).flatMap((r) => [...r]) }),
  });
}
