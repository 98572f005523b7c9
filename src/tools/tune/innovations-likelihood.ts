/**
 * The Gaussian log-likelihood of a recording under one estimator, by the prediction-error
 * decomposition: ℓ(θ) = −½ Σ_k (m_k log 2π + log det S_k + ν_kᵀ S_k⁻¹ ν_k) over the applied
 * updates, ν_k the innovation and S_k its covariance from the filter itself (Schweppe,
 * "Evaluation of likelihood functions for Gaussian signals", IEEE Trans. IT 11(1), 1965;
 * Harvey, Forecasting, Structural Time Series Models and the Kalman Filter, 1989, §3.4; from
 * memory). Exact for linear-Gaussian models; for EKF/UKF sensors it is the usual approximation.
 */
import type { Estimator } from '../../estimation/estimator.js';
import type { EntityMeasurements } from './entity-measurements.js';

const LOG_2PI = Math.log(2 * Math.PI);

/** ℓ and the counts behind it. */
export interface LikelihoodResult {
  /** ℓ(θ), natural log; −Infinity when no update counted. */
  readonly logLikelihood: number;
  /** Updates that entered ℓ. */
  readonly updates: number;
  /** Σ m_k over those updates (the pooled chi-square degrees of freedom). */
  readonly components: number;
  /** Σ NIS over those updates. */
  readonly nisSum: number;
  /** Updates left out because they only fixed the initial state (see `innovationsLogLikelihood`). */
  readonly initial: number;
  /** Steps the filter refused for numerics (each restarts its track); ℓ is suspect when > 0. */
  readonly refused: number;
}

/**
 * Runs a fresh track per entity through the estimator (which must have its gate off) and sums
 * the terms of ℓ. The first updates of each track are left out until the measurements it has
 * seen since (re)initialization have as many components as the state has entries: until then
 * the prediction carries the wide starting prior rather than the model, so those terms measure
 * the prior and not θ (Harvey's diffuse initialization, ibid. §3.4.3; from memory). For a
 * random walk that skips only the initializing measurement.
 */
export function innovationsLogLikelihood(estimator: Estimator, entities: readonly EntityMeasurements[]): LikelihoodResult {
  if (estimator.settings.sensors.some((s) => s.gateThreshold !== Number.POSITIVE_INFINITY)) {
    throw new RangeError('innovationsLogLikelihood needs an estimator with its gate off (see tuningVariant)');
  }
  const ws = estimator.workspace.filter;
  const n = estimator.settings.process.dim;
  const dims = estimator.settings.sensors.map((s) => s.model.dim);
  let sum = 0;
  let updates = 0;
  let components = 0;
  let nisSum = 0;
  let initial = 0;
  let refused = 0;
  for (const { records } of entities) {
    const track = estimator.createTrack();
    let seen = 0;
    for (const r of records) {
      const verdict = track.ingest(r.sensor, r.values, r.R, r.tS, r.nowS);
      const m = dims[r.sensor]!;
      if (verdict === 'initialized') {
        seen = m;
        initial += 1;
      } else if (verdict === 'applied') {
        // Records come in event-time order, so no update is late (a late one would leave the
        // workspace holding the last re-filtered step, not its own).
        if (seen < n) {
          seen += m;
          initial += 1;
          continue;
        }
        // After an applied update the workspace holds S's Cholesky factor (row-major, m×m).
        let logDet = 0;
        for (let i = 0; i < m; i++) logDet += Math.log(ws.L[i * m + i]!);
        sum += m * LOG_2PI + 2 * logDet + ws.nis;
        nisSum += ws.nis;
        updates += 1;
        components += m;
      } else if (verdict === 'numerics') {
        refused += 1;
        seen = 0;
      }
    }
  }
  return { logLikelihood: updates === 0 ? Number.NEGATIVE_INFINITY : -0.5 * sum, updates, components, nisSum, initial, refused };
}
