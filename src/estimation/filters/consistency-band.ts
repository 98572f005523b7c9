/**
 * Thresholds for the chi-square gate and for the filter-consistency tests on the NIS: the
 * two-sided band of a windowed NIS mean and the whiteness bound of innovation autocorrelations
 * (Bar-Shalom, Li, Kirubarajan, Estimation with Applications to Tracking and Navigation, 2001,
 * §5.4; section numbers from memory). These are set-up values: they are computed once from
 * configuration, so a bad argument is a configuration error and throws ModelConfigError.
 */
import { ModelConfigError } from '../model-config-error.js';
import { chiSquareCdf, chiSquareQuantile } from './chi-square.js';
import { normalQuantile } from './normal-distribution.js';

/** A two-sided acceptance region [lower, upper] for a test statistic. */
export interface ConsistencyBand {
  /** Values below this are too small (the filter claims less confidence than it earns). */
  readonly lower: number;
  /** Values above this are too large (the filter is overconfident or mismodelled). */
  readonly upper: number;
}

function requirePositiveInteger(name: string, value: number): void {
  if (!Number.isInteger(value) || value < 1) {
    throw new ModelConfigError(name, `${name} must be an integer ≥ 1, got ${String(value)}`);
  }
}

function requireOpenUnit(name: string, value: number): void {
  if (!(value > 0 && value < 1)) {
    throw new ModelConfigError(name, `${name} must lie strictly between 0 and 1, got ${String(value)}`);
  }
}

/**
 * Chi-square gate γ with P(χ²_m ≤ γ) = probability: a measurement of dimension m whose NIS
 * exceeds γ is rejected, and a correct filter loses the share 1 − probability of good data.
 * probability = 1 gives Infinity (no gate). Throws ModelConfigError for m not an integer ≥ 1
 * or probability outside (0, 1].
 */
export function gateThreshold(m: number, probability: number): number {
  requirePositiveInteger('measurementDim', m);
  if (probability === 1) return Number.POSITIVE_INFINITY;
  requireOpenUnit('gateProbability', probability);
  return chiSquareQuantile(probability, m);
}

/**
 * Probability P_G = P(χ²_m ≤ g²) that a g-sigma gate contains the true measurement of dimension
 * m (Bar-Shalom & Fortmann, Tracking and Data Association, 1988, ch. 2; from memory). Throws
 * ModelConfigError for m not an integer ≥ 1 or g negative or not finite.
 */
export function gateProbability(m: number, g: number): number {
  requirePositiveInteger('measurementDim', m);
  if (!(g >= 0) || !Number.isFinite(g)) {
    throw new ModelConfigError('gateSigmas', `gateSigmas must be a finite number ≥ 0, got ${String(g)}`);
  }
  return chiSquareCdf(g * g, m);
}

/**
 * Two-sided acceptance region of the mean of windowN NIS values of dimension m at the given
 * confidence: N·mean ~ χ²(N·m) for a consistent filter with white innovations, so the band is
 * [χ²inv(α/2, N·m)/N, χ²inv(1 − α/2, N·m)/N] with α = 1 − confidence (Bar-Shalom, Li,
 * Kirubarajan 2001, §5.4.2; from memory). Throws ModelConfigError for m or windowN not an
 * integer ≥ 1, or confidence outside (0, 1).
 */
export function nisBand(m: number, windowN: number, confidence: number): ConsistencyBand {
  requirePositiveInteger('measurementDim', m);
  requirePositiveInteger('windowN', windowN);
  requireOpenUnit('confidence', confidence);
  const halfAlpha = 0.5 * (1 - confidence);
  const dof = windowN * m;
  return {
    lower: chiSquareQuantile(halfAlpha, dof) / windowN,
    // 1 − α/2 written as (1 + confidence)/2 rounds once instead of twice.
    upper: chiSquareQuantile(0.5 * (1 + confidence), dof) / windowN,
  };
}

/**
 * Bound z/√K on the normalized sample autocorrelation of white innovations over K samples at the
 * given two-sided confidence (z = Φ⁻¹(1 − α/2), 1.959964 at 95 %): larger magnitudes say the
 * innovations are correlated (Bar-Shalom, Li, Kirubarajan 2001, §5.4.2; from memory). Throws
 * ModelConfigError for K not an integer ≥ 1 or confidence outside (0, 1).
 */
export function whitenessBound(K: number, confidence: number): number {
  requirePositiveInteger('whitenessSamples', K);
  requireOpenUnit('confidence', confidence);
  // Φ⁻¹(1 − α/2) = −Φ⁻¹(α/2); the lower-tail form keeps every digit of a small α.
  return -normalQuantile(0.5 * (1 - confidence)) / Math.sqrt(K);
}
