/**
 * The closed-form discretization shared by the constant-velocity and constant-acceleration
 * blocks: per axis a chain of `order` integrators (position, velocity[, acceleration]) driven by
 * white noise of spectral density q on the last derivative. For derivative indices i, j
 * (0 = position) and r = order − 1:
 *   A_ij = T^(j−i)/(j−i)!                             for j ≥ i,
 *   Q_ij = q·T^(2r+1−i−j) / ((2r+1−i−j)·(r−i)!·(r−j)!),
 * which gives q[[T³/3, T²/2], [T²/2, T]] for order 2 and q[[T⁵/20, T⁴/8, T³/6], …] for order 3
 * (Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to Tracking and Navigation", 2001,
 * §6.2; the integral Q = ∫₀ᵀ e^{Fs} G q Gᵀ e^{Fᵀs} ds evaluated term by term).
 * State order: all axes' positions, then all velocities, then all accelerations.
 */

const FACTORIAL = [1, 1, 2, 6, 24, 120, 720];

/** Precomputed coefficients of one chain order, so a step only multiplies by powers of T. */
export interface KinematicCoefficients {
  /** Derivatives per axis (2 = position + velocity, 3 = + acceleration). */
  readonly order: number;
  /** aCoef[i·order + j] = 1/(j−i)! for j ≥ i, else 0. */
  readonly aCoef: Float64Array;
  /** qCoef[i·order + j] = 1/((2r+1−i−j)·(r−i)!·(r−j)!). */
  readonly qCoef: Float64Array;
}

/** Coefficients for a chain of `order` integrators (2 or 3; at most 6). */
export function kinematicCoefficients(order: number): KinematicCoefficients {
  const r = order - 1;
  const aCoef = new Float64Array(order * order);
  const qCoef = new Float64Array(order * order);
  for (let i = 0; i < order; i++) {
    for (let j = 0; j < order; j++) {
      if (j >= i) aCoef[i * order + j] = 1 / FACTORIAL[j - i]!;
      qCoef[i * order + j] = 1 / ((2 * r + 1 - i - j) * FACTORIAL[r - i]! * FACTORIAL[r - j]!);
    }
  }
  return { order, aCoef, qCoef };
}

/**
 * Writes A and Q (n×n, n = order·axes) for step dtS > 0, with spectral density q[axis].
 * `powers` is caller-owned scratch of length ≥ 2·order (powers of dtS).
 */
export function writeKinematicStepInto(
  c: KinematicCoefficients,
  q: Float64Array,
  dtS: number,
  powers: Float64Array,
  A: Float64Array,
  Q: Float64Array,
): void {
  const axes = q.length;
  const k = c.order;
  const n = k * axes;
  A.fill(0, 0, n * n);
  Q.fill(0, 0, n * n);
  powers[0] = 1;
  for (let p = 1; p < 2 * k; p++) powers[p] = powers[p - 1]! * dtS;
  for (let axis = 0; axis < axes; axis++) {
    for (let i = 0; i < k; i++) {
      const row = (i * axes + axis) * n;
      for (let j = 0; j < k; j++) {
        const col = j * axes + axis;
        if (j >= i) A[row + col] = c.aCoef[i * k + j]! * powers[j - i]!;
        Q[row + col] = q[axis]! * c.qCoef[i * k + j]! * powers[2 * k - 1 - i - j]!;
      }
    }
  }
}
