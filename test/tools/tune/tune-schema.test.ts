import { describe, expect, it } from 'vitest';
import { tanksEstimatorInput, yardEstimatorInput } from '../../../src/config/default-demo-config.js';
import { parseConfig } from '../../../src/config/load-config.js';
import { parseParameterPath } from '../../../src/config/tune-schema.js';

function issuesFor(free: unknown[], base = tanksEstimatorInput()): { path: string; message: string }[] {
  const result = parseConfig({ estimators: [{ ...base, tune: { free } }] }, {});
  return result.ok ? [] : [...result.issues];
}

describe('the tune section', () => {
  it('accepts process-noise, Gauss–Markov and measurement-noise paths', () => {
    const free = [{ path: 'model.blocks[0].q' }, { path: 'model.blocks[1].tauS', min: 60, max: 86400 }, { path: 'model.blocks[1].sigma' }, { path: 'sensors.level.measurement.sigma' }];
    expect(issuesFor(free)).toEqual([]);
  });

  it('defaults the iteration budget to 400', () => {
    const result = parseConfig({ estimators: [{ ...tanksEstimatorInput(), tune: { free: [{ path: 'model.blocks[0].q' }] } }] }, {});
    expect(result.ok ? result.config.estimators[0]!.tune?.maxIterations : null).toBe(400);
  });

  it('reports a path that does not exist at estimators[i].tune.free[j].path', () => {
    expect(issuesFor([{ path: 'model.blocks[0].q' }, { path: 'model.blocks[2].q' }])).toEqual([
      { path: 'estimators[0].tune.free[1].path', message: '"model.blocks[2].q" does not exist in this estimator' },
    ]);
  });

  it('refuses a key that is not a noise parameter', () => {
    expect(issuesFor([{ path: 'model.blocks[0].axes' }])[0]?.message).toBe('"axes" is not a process-noise parameter; tunable are q, tauS, sigma');
  });

  it('refuses a path outside the model and the sensors’ measurements', () => {
    expect(issuesFor([{ path: 'prior.sigma.level' }])[0]?.path).toBe('estimators[0].tune.free[0].path');
  });

  it('refuses a list without an index', () => {
    const base = { ...tanksEstimatorInput(), model: { type: 'random-walk' as const, states: ['level', 'level_rate', 'pressure_bias'], q: [1, 2, 3] } };
    const { prior: _prior, ...withoutPrior } = base;
    expect(issuesFor([{ path: 'model.q' }], withoutPrior)[0]?.message).toBe('"model.q" is a list; name one entry, e.g. "model.q[0]"');
  });

  it('refuses a sensor σ that each payload replaces with its own accuracy', () => {
    expect(issuesFor([{ path: 'sensors.gnss.measurement.sigmaM' }], yardEstimatorInput())[0]?.message).toBe(
      'has no effect: sensor "gnss" reads each payload\'s own accuracy (decode.sigma)',
    );
  });

  it('refuses the same path twice', () => {
    expect(issuesFor([{ path: 'model.blocks[0].q' }, { path: 'model.blocks[0].q' }])[0]).toEqual({
      path: 'estimators[0].tune.free[1].path', message: 'duplicate path (also tune.free[0])',
    });
  });

  it('refuses a max that is not above min', () => {
    expect(issuesFor([{ path: 'model.blocks[0].q', min: 1, max: 1 }])[0]?.path).toBe('estimators[0].tune.free[0].max');
  });
});

describe('parseParameterPath', () => {
  it('splits keys and list indices', () => {
    expect(parseParameterPath('sensors.wheel-left.measurement.sigma[1]')).toEqual(['sensors', 'wheel-left', 'measurement', 'sigma', 1]);
  });

  it('refuses an empty segment', () => {
    expect(parseParameterPath('model..q')).toBeNull();
  });
});
