/**
 * The pooled NIS test of a whole run: for a consistent filter with white innovations, the sum
 * of N NIS values with Σm components is χ²(Σm), so the average NIS lies in
 * [χ²inv(α/2, Σm)/N, χ²inv(1 − α/2, Σm)/N] with probability 1 − α (Bar-Shalom, Li,
 * Kirubarajan, Estimation with Applications to Tracking and Navigation, 2001, §5.4; from memory;
 * REFERENCE-CHECKS C2). With one measurement dimension m this is the C2 region for Nm degrees
 * of freedom; with several sensors Σm replaces Nm.
 */
import { chiSquareQuantile } from '../../estimation/filters/chi-square.js';

/** The average NIS of a run against its band. */
export interface NisConsistency {
  readonly meanNis: number;
  /** N, the updates averaged. */
  readonly updates: number;
  /** Σm, the chi-square degrees of freedom of the sum. */
  readonly dof: number;
  readonly lower: number;
  readonly upper: number;
  readonly inside: boolean;
}

/** Tests Σ NIS over `updates` updates with `dof` components in all, at `confidence` (default 0.95). */
export function nisConsistency(nisSum: number, updates: number, dof: number, confidence = 0.95): NisConsistency {
  if (updates < 1 || dof < 1) {
    return { meanNis: Number.NaN, updates, dof, lower: Number.NaN, upper: Number.NaN, inside: false };
  }
  const meanNis = nisSum / updates;
  const lower = chiSquareQuantile(0.5 * (1 - confidence), dof) / updates;
  const upper = chiSquareQuantile(0.5 * (1 + confidence), dof) / updates;
  return { meanNis, updates, dof, lower, upper, inside: meanNis >= lower && meanNis <= upper };
}
