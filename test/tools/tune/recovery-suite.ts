/**
 * One recovery suite for every simulated model: fit q and σ from starts off by a factor 5 in
 * both directions and check the fit against the truth the recording was drawn with.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { RecordedMessage } from '../../../src/tools/tune/entity-measurements.js';
import type { NoiseFit } from '../../../src/tools/tune/noise-fit.js';
import { evaluateLikelihood, type TuneProblem } from '../../../src/tools/tune/tune-problem.js';
import { fitToEnd, problemFor, type EstimatorInput } from './tune-fixtures.js';

/** What a recovery suite needs: the recording, the truth, and the estimator configured at given values. */
export interface RecoveryCase {
  readonly name: string;
  readonly truth: readonly [q: number, sigma: number];
  readonly messages: readonly RecordedMessage[];
  readonly estimator: (q: number, sigma: number) => EstimatorInput;
}

/** Declares the recovery tests for one case. */
export function describeRecovery(c: RecoveryCase): void {
  describe(`tuning ${c.name}`, () => {
    const [q, sigma] = c.truth;
    let high: TuneProblem;
    let fitHigh: NoiseFit;
    let fitLow: NoiseFit;

    beforeAll(() => {
      high = problemFor(c.estimator(5 * q, 5 * sigma), c.messages);
      fitHigh = fitToEnd(high);
      fitLow = fitToEnd(problemFor(c.estimator(q / 5, sigma / 5), c.messages));
    });

    it('converges from a start five times too high', () => {
      expect(fitHigh.converged).toBe(true);
    });

    it('recovers q within 15 % of the truth', () => {
      expect(Math.abs(fitHigh.fitted.theta[0]! / q - 1)).toBeLessThan(0.15);
    });

    it('recovers σ within 15 % of the truth', () => {
      expect(Math.abs(fitHigh.fitted.theta[1]! / sigma - 1)).toBeLessThan(0.15);
    });

    it('reaches at least the log-likelihood of the true parameters', () => {
      const atTruth = evaluateLikelihood(high, [q, sigma])!.logLikelihood;
      expect(fitHigh.fitted.likelihood!.logLikelihood).toBeGreaterThanOrEqual(atTruth - 1e-3);
    });

    it('ends within 1 % of the same values from a start five times too low', () => {
      for (let i = 0; i < 2; i++) {
        expect(Math.abs(fitLow.fitted.theta[i]! / fitHigh.fitted.theta[i]! - 1)).toBeLessThan(0.01);
      }
    });

    it('gives 95 % intervals that contain the truth', () => {
      const iv = fitHigh.intervals;
      if (iv === null || !iv.ok) throw new Error('expected intervals');
      expect([iv.lower[0]!, iv.lower[1]!].every((v, i) => v < c.truth[i]!)).toBe(true);
      expect([iv.upper[0]!, iv.upper[1]!].every((v, i) => v > c.truth[i]!)).toBe(true);
    });

    it('moves the average NIS from outside its band to inside it', () => {
      expect(fitHigh.start.nis!.inside).toBe(false);
      expect(fitHigh.fitted.nis!.inside).toBe(true);
    });
  });
}
