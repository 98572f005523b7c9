/**
 * A measurement model: y(n) = h(x(n)) + v(n), cov(v) = R (for linear sensors h(x) = C x and
 * R = D Rv Dᵀ). The filter needs only what is declared here; it never asks which sensor it has.
 */
export interface MeasurementModel {
  /** Number of measurement components M. */
  readonly dim: number;
  /** Number of states P of the process model this sensor reads. */
  readonly stateDim: number;
  /** True when h is linear (C constant): the KF and EKF are then the same filter. */
  readonly linear: boolean;
  /** Names of the measurement components, e.g. `east`, `north` or `range`, `bearing`. */
  readonly componentNames: readonly string[];
  /** The sensor's default measurement-noise covariance (M×M, row-major), already D·Rv·Dᵀ. */
  readonly R: Float64Array;
  /**
   * Turns a measurement as reported (e.g. latitude/longitude in degrees) into the vector the
   * model compares against h(x), in place. Identity for most sensors.
   */
  normalizeInPlace(y: Float64Array): void;
  /** Predicted measurement h(x) into yhat (length M). */
  measureInto(x: Float64Array, yhat: Float64Array): void;
  /** Jacobian ∂h/∂x at x into H (M×P, row-major). Constant C for linear models. */
  jacobianInto(x: Float64Array, H: Float64Array): void;
  /** Innovation ν = y − yhat into nu, wrapping angular components to (−π, π]. */
  innovationInto(y: Float64Array, yhat: Float64Array, nu: Float64Array): void;
  /**
   * Sets the state components this measurement observes directly (and their covariance block)
   * from a first measurement, leaving the others as they are. Returns false when the
   * measurement cannot initialize a track (e.g. speed alone says nothing of position).
   */
  initializeInPlace(y: Float64Array, R: Float64Array, x: Float64Array, P: Float64Array): boolean;
}

/** Wraps an angle in radians to (−π, π]. */
export function wrapAngle(a: number): number {
  const twoPi = 2 * Math.PI;
  let w = a - twoPi * Math.floor((a + Math.PI) / twoPi);
  // floor maps +π to −π; the trade's convention keeps +π and excludes −π.
  if (w <= -Math.PI) w += twoPi;
  return w;
}
