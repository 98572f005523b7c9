/**
 * Whiteness of a sensor's normalized innovations: the sample autocorrelation
 *   ρ(l) = Σ_k (r_k − r̄)(r_{k+l} − r̄) / Σ_k (r_k − r̄)²,  l = 1 … L,
 * of one component r_k = ν_k/√S_k, which for an optimal filter is white, so each ρ(l) lies
 * within ±z/√K (K samples, z = 1.96 at 95 %) but for one lag in twenty (Bar-Shalom, Li,
 * Kirubarajan, Estimation with Applications to Tracking and Navigation, 2001, §5.4.2; from
 * memory).
 */
import { whitenessBound } from '../estimation/filters/consistency-band.js';
import type { Float64Column } from './float64-column.js';

/** Autocorrelations of one component and their bound. */
export interface Whiteness {
  /** ρ(1) … ρ(L); NaN where there are too few samples. */
  readonly rho: readonly number[];
  /** z/√K at the given confidence; NaN for K = 0. */
  readonly bound: number;
  readonly samples: number;
}

/** Autocorrelation of component k of the innovation rows in `column`, lags 1 … maxLag. */
export function innovationWhiteness(column: Float64Column, k: number, maxLag: number, confidence: number): Whiteness {
  const values: number[] = [];
  for (let i = 0; i < column.length; i++) {
    const v = column.at(i, k);
    if (Number.isFinite(v)) values.push(v);
  }
  const K = values.length;
  const rho: number[] = [];
  const mean = values.reduce((a, b) => a + b, 0) / Math.max(1, K);
  let c0 = 0;
  for (const v of values) c0 += (v - mean) * (v - mean);
  for (let l = 1; l <= maxLag; l++) {
    if (K <= l || !(c0 > 0)) {
      rho.push(Number.NaN);
      continue;
    }
    let c = 0;
    for (let i = 0; i + l < K; i++) c += (values[i]! - mean) * (values[i + l]! - mean);
    rho.push(c / c0);
  }
  return { rho, bound: K > 0 ? whitenessBound(K, confidence) : Number.NaN, samples: K };
}
