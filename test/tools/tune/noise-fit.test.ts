import { describe, expect, it } from 'vitest';
import { summarizeFit } from '../../../src/tools/tune/noise-fit.js';
import { tuneReportText } from '../../../src/tools/tune/tune-report.js';
import { fitToEnd, probeEstimator, probeRecording, problemFor } from './tune-fixtures.js';

// A short probe recording (q = 0.002 °C²/s, σ = 0.15 °C): enough for the behaviours below.
const messages = probeRecording('4', 0.002, 0.15, 600);

describe('fitNoiseParameters', () => {
  it('holds a parameter at its bound when the maximum lies beyond it', () => {
    const input = { ...probeEstimator(0.0005, 0.15), tune: { free: [{ path: 'model.q', max: 0.001 }, { path: 'sensors.temp.measurement.sigma' }] } };
    const problem = problemFor(input, messages);
    const fit = fitToEnd(problem);
    expect(fit.fitted.theta[0]).toBeCloseTo(0.001, 9);
    expect(fit.atBound).toEqual([true, false]);
    expect(tuneReportText(problem, fit, { index: 0, name: 'probes' })).toMatch(/model\.q .*\(at its bound\)/);
  });

  it('gives no intervals for a parameter the likelihood does not depend on', () => {
    // The second random walk is never measured, so its q leaves ℓ unchanged.
    const input = {
      ...probeEstimator(0.002, 0.15),
      model: { type: 'random-walk' as const, states: ['temp', 'spare'], q: [0.002, 1] },
      tune: { free: [{ path: 'model.q[0]' }, { path: 'model.q[1]', min: 0.5, max: 2 }] },
    };
    const problem = problemFor(input, messages);
    const fit = fitToEnd(problem);
    expect(fit.intervals).toMatchObject({ ok: false, reason: 'not-a-maximum' });
    expect(tuneReportText(problem, fit, { index: 0, name: 'probes' })).toContain('no intervals: ℓ is not curved down at the fit');
  });
});

describe('summarizeFit', () => {
  it('skips the intervals of a stopped search and says so', () => {
    const problem = problemFor(probeEstimator(0.002, 0.15), messages);
    const fit = summarizeFit(problem, Float64Array.of(0.002, 0.15), { iterations: 3, evaluations: 9, converged: false, stopped: true });
    expect(fit.intervals).toBeNull();
    expect(tuneReportText(problem, fit, { index: 0, name: 'probes' })).toContain('no intervals: the search was stopped');
  });
});
