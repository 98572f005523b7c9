/**
 * Constant-velocity block: per axis, position and velocity driven by continuous white-noise
 * acceleration (CWNA) of spectral density q, discretized exactly:
 * A = [[1, T], [0, 1]], Q = q·[[T³/3, T²/2], [T²/2, T]] per axis (Bar-Shalom, Li, Kirubarajan
 * 2001, §6.2). Because it is exact, one prediction over a gap equals several shorter ones.
 * State order: all positions, then all velocities (e.g. `east, north, v_east, v_north`).
 */
import type { ProcessModel } from './process-model.js';
import { checkPerAxis, checkStateNames } from './parameter-checks.js';
import { kinematicCoefficients, writeKinematicStepInto, type KinematicCoefficients } from './kinematic-chain.js';
import { isUsableStepS, writeIdentityStepInto, writeNaNStepInto } from './step-guard.js';

/** Configuration of a ConstantVelocityModel. */
export interface ConstantVelocityModelOptions {
  /** Position state names, one per axis; default `['east', 'north']`. */
  readonly positionNames?: readonly string[];
  /** Velocity state names, one per axis; default `v_` + each position name. */
  readonly velocityNames?: readonly string[];
  /** Acceleration spectral density q per axis (position unit²/s³), or one value for all axes. */
  readonly spectralDensity: number | readonly number[];
}

/** n-axis constant-velocity (CWNA) block with exact closed-form discretization. */
export class ConstantVelocityModel implements ProcessModel {
  /** 2 × axes. */
  readonly dim: number;
  /** Positions first, then velocities. */
  readonly stateNames: readonly string[];
  /** Spectral density per axis (position unit²/s³). */
  readonly spectralDensity: Float64Array;
  private readonly coefficients: KinematicCoefficients = kinematicCoefficients(2);
  private readonly powers = new Float64Array(4);

  /** Validates names (unique, one velocity per position) and q (positive, finite). */
  constructor(options: ConstantVelocityModelOptions) {
    const positions = checkStateNames('positionNames', options.positionNames ?? ['east', 'north']);
    const velocities = checkStateNames(
      'velocityNames',
      options.velocityNames ?? positions.map((p) => `v_${p}`),
      positions.length,
    );
    this.stateNames = checkStateNames('stateNames', [...positions, ...velocities]);
    this.dim = this.stateNames.length;
    this.spectralDensity = checkPerAxis('spectralDensity', options.spectralDensity, positions.length);
  }

  /** Writes A(dtS) and Q(dtS) (dim×dim) into the caller's buffers; dtS in seconds, ≥ 0. */
  discretizeInto(dtS: number, A: Float64Array, Q: Float64Array): void {
    if (!isUsableStepS(dtS)) return writeNaNStepInto(this.dim, A, Q);
    if (dtS === 0) return writeIdentityStepInto(this.dim, A, Q);
    writeKinematicStepInto(this.coefficients, this.spectralDensity, dtS, this.powers, A, Q);
  }
}
