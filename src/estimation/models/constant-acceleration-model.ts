/**
 * Constant-acceleration block: per axis, position, velocity and acceleration driven by white
 * jerk (a Wiener-process acceleration) of spectral density q, discretized exactly:
 * A = [[1, T, T²/2], [0, 1, T], [0, 0, 1]],
 * Q = q·[[T⁵/20, T⁴/8, T³/6], [T⁴/8, T³/3, T²/2], [T³/6, T²/2, T]] per axis
 * (Bar-Shalom, Li, Kirubarajan 2001, §6.2). State order: all positions, all velocities, then all
 * accelerations (e.g. `east, north, v_east, v_north, a_east, a_north`).
 */
import type { ProcessModel } from './process-model.js';
import { checkPerAxis, checkStateNames } from './parameter-checks.js';
import { kinematicCoefficients, writeKinematicStepInto, type KinematicCoefficients } from './kinematic-chain.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';

/** Configuration of a ConstantAccelerationModel. */
export interface ConstantAccelerationModelOptions {
  /** Position state names, one per axis; default `['east', 'north']`. */
  readonly positionNames?: readonly string[];
  /** Velocity state names, one per axis; default `v_` + each position name. */
  readonly velocityNames?: readonly string[];
  /** Acceleration state names, one per axis; default `a_` + each position name. */
  readonly accelerationNames?: readonly string[];
  /** Jerk spectral density q per axis (position unit²/s⁵), or one value for all axes. */
  readonly spectralDensity: number | readonly number[];
}

/** n-axis constant-acceleration (white-jerk) block with exact closed-form discretization. */
export class ConstantAccelerationModel implements ProcessModel {
  /** 3 × axes. */
  readonly dim: number;
  /** Positions, then velocities, then accelerations. */
  readonly stateNames: readonly string[];
  /** Spectral density per axis (position unit²/s⁵). */
  readonly spectralDensity: Float64Array;
  private readonly coefficients: KinematicCoefficients = kinematicCoefficients(3);
  private readonly powers = new Float64Array(6);

  /** Validates names (unique, one of each derivative per axis) and q (positive, finite). */
  constructor(options: ConstantAccelerationModelOptions) {
    const positions = checkStateNames('positionNames', options.positionNames ?? ['east', 'north']);
    const axes = positions.length;
    const velocities = checkStateNames('velocityNames', options.velocityNames ?? positions.map((p) => `v_${p}`), axes);
    const accelerations = checkStateNames(
      'accelerationNames',
      options.accelerationNames ?? positions.map((p) => `a_${p}`),
      axes,
    );
    this.stateNames = checkStateNames('stateNames', [...positions, ...velocities, ...accelerations]);
    this.dim = this.stateNames.length;
    this.spectralDensity = checkPerAxis('spectralDensity', options.spectralDensity, axes);
  }

  /** Writes A(dtS) and Q(dtS) (dim×dim) into the caller's buffers; dtS in seconds, ≥ 0. */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    if (!isUsableStepS(dtS)) return writeNaNStepInto(this.dim, A, Q);
    if (dtS === 0) return writeIdentityStepInto(this.dim, A, Q);
    writeKinematicStepInto(this.coefficients, this.spectralDensity, dtS, this.powers, A, Q);
  }
}
