import type { DecodeRejection } from './decode-rejection.js';

/**
 * Reads a payload's own accuracy into a full M×M covariance R. Only the cheap structural checks
 * happen here (finite, positive diagonal, symmetric); positive semi-definiteness is the filter's
 * check, made once per update on the factor it computes anyway.
 */

/**
 * Allowed |R_ij − R_ji| relative to sqrt(R_ii·R_jj): large enough for values printed with six
 * or more significant digits, small enough to refuse a garbled or transposed-wrong matrix.
 */
export const COVARIANCE_SYMMETRY_TOLERANCE = 1e-6;

/** Writes R = σ²·I; false when σ is not positive and finite or σ² over/underflows. */
export function fillSigmaInto(sigma: number, dim: number, covariance: Float64Array): boolean {
  const variance = sigma * sigma;
  if (!(sigma > 0) || !(variance > 0) || variance === Infinity) return false;
  covariance.fill(0);
  for (let i = 0; i < dim; i++) covariance[i * dim + i] = variance;
  return true;
}

/** Reads a sigma field (one number, or an array of M per-component σ) into R. */
export function readSigmaInto(
  value: unknown,
  dim: number,
  covariance: Float64Array,
): DecodeRejection | null {
  if (typeof value === 'number') {
    return fillSigmaInto(value, dim, covariance) ? null : 'bad-covariance';
  }
  if (!Array.isArray(value)) return 'wrong-type';
  if (value.length !== dim) return 'wrong-length';
  covariance.fill(0);
  for (let i = 0; i < dim; i++) {
    const sigma: unknown = value[i];
    if (typeof sigma !== 'number') return 'wrong-type';
    const variance = sigma * sigma;
    if (!(sigma > 0) || !(variance > 0) || variance === Infinity) return 'bad-covariance';
    covariance[i * dim + i] = variance;
  }
  return null;
}

/**
 * Reads a covariance field, a flat row-major M×M array or the M(M+1)/2 upper triangle row by
 * row, into the full symmetric R (a full one is symmetrized to remove printing round-off).
 */
export function readCovarianceInto(
  value: unknown,
  dim: number,
  covariance: Float64Array,
): DecodeRejection | null {
  if (!Array.isArray(value)) return 'wrong-type';
  const isFull = value.length === dim * dim;
  if (!isFull && value.length !== (dim * (dim + 1)) / 2) return 'wrong-length';
  let k = 0;
  for (let i = 0; i < dim; i++) {
    for (let j = isFull ? 0 : i; j < dim; j++) {
      const entry: unknown = value[k++];
      if (typeof entry !== 'number') return 'wrong-type';
      if (!Number.isFinite(entry)) return 'bad-covariance';
      covariance[i * dim + j] = entry;
      if (!isFull) covariance[j * dim + i] = entry;
    }
  }
  for (let i = 0; i < dim; i++) if (!(covariance[i * dim + i]! > 0)) return 'bad-covariance';
  return isFull ? symmetrizeChecked(covariance, dim) : null;
}

function symmetrizeChecked(covariance: Float64Array, dim: number): DecodeRejection | null {
  for (let i = 0; i < dim; i++) {
    for (let j = i + 1; j < dim; j++) {
      const upper = covariance[i * dim + j]!;
      const lower = covariance[j * dim + i]!;
      // sqrt of each factor, not of the product, so huge variances cannot overflow the scale.
      const scale = Math.sqrt(covariance[i * dim + i]!) * Math.sqrt(covariance[j * dim + j]!);
      if (Math.abs(upper - lower) > COVARIANCE_SYMMETRY_TOLERANCE * scale) return 'bad-covariance';
      const mean = 0.5 * (upper + lower);
      covariance[i * dim + j] = mean;
      covariance[j * dim + i] = mean;
    }
  }
  return null;
}
