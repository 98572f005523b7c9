import type { Prng } from './prng.js';

/** Exact discrete-time coefficients of a first-order Gauss–Markov process over one step. */
export interface GaussMarkovCoefficients {
  /** Transition factor φ = exp(−dtS / tauS). */
  readonly phi: number;
  /** Standard deviation of the driving noise per step, σ·sqrt(1 − φ²). */
  readonly driveSigma: number;
}

/**
 * Coefficients for x[k+1] = φ·x[k] + w[k], w ~ N(0, σ²(1 − φ²)): the exact sampling of the
 * continuous process dx/dt = −x/τ + white noise, whose stationary variance is σ² for any step
 * (first-order Gauss–Markov process; R. G. Brown, P. Y. C. Hwang, "Introduction to Random
 * Signals and Applied Kalman Filtering", 4th ed., 2012; section not checked).
 */
export function gaussMarkovCoefficients(
  dtS: number,
  tauS: number,
  sigma: number,
): GaussMarkovCoefficients {
  if (!(dtS > 0) || !(tauS > 0) || !(sigma >= 0)) {
    throw new RangeError(`Gauss–Markov needs dtS > 0, tauS > 0, sigma ≥ 0 (got ${dtS}, ${tauS}, ${sigma})`);
  }
  const phi = Math.exp(-dtS / tauS);
  return { phi, driveSigma: sigma * Math.sqrt(1 - phi * phi) };
}

/** One step of the process from `value`, drawing the driving noise from `prng`. */
export function stepGaussMarkov(value: number, c: GaussMarkovCoefficients, prng: Prng): number {
  return c.phi * value + c.driveSigma * prng.nextGaussian();
}
