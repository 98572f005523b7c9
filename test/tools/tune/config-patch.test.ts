import { describe, expect, it } from 'vitest';
import { tanksEstimatorInput } from '../../../src/config/default-demo-config.js';
import { parseConfig } from '../../../src/config/load-config.js';
import { parameterValue, patchEstimatorConfig, tuningVariant } from '../../../src/tools/tune/config-patch.js';

function tanks() {
  const parsed = parseConfig({ estimators: [tanksEstimatorInput()] }, {});
  if (!parsed.ok) throw new Error('demo config invalid');
  return parsed.config.estimators[0]!;
}

describe('patchEstimatorConfig', () => {
  it('sets each named parameter in a validated copy', () => {
    const result = patchEstimatorConfig(tanks(), new Map([['model.blocks[1].tauS', 1800], ['sensors.level.measurement.sigma', 0.05]]));
    if (!result.ok) throw new Error('expected a valid patch');
    expect(parameterValue(result.config, 'model.blocks[1].tauS')).toBe(1800);
    expect(parameterValue(result.config, 'sensors.level.measurement.sigma')).toBe(0.05);
  });

  it('leaves the input config as it was', () => {
    const config = tanks();
    patchEstimatorConfig(config, new Map([['model.blocks[0].q', 0.5]]));
    expect(parameterValue(config, 'model.blocks[0].q')).toBe(1e-6);
  });

  it('refuses a non-positive value with the schema message at that path', () => {
    const result = patchEstimatorConfig(tanks(), new Map([['sensors.pressure.measurement.sigma', -0.01]]));
    expect(result).toEqual({ ok: false, issues: [{ path: 'sensors.pressure.measurement.sigma', message: 'expected a positive number' }] });
  });

  it('refuses a path that names no number in the estimator', () => {
    const result = patchEstimatorConfig(tanks(), new Map([['model.blocks[2].q', 1], ['sensors.level.topic', 1]]));
    expect(result.ok ? [] : result.issues.map((i) => i.path)).toEqual(['model.blocks[2].q', 'sensors.level.topic']);
  });

  it('refuses a path that does not parse', () => {
    const result = patchEstimatorConfig(tanks(), new Map([['model..q', 1]]));
    expect(result.ok ? null : result.issues[0]!.message).toBe('does not name a number in this estimator');
  });
});

describe('tuningVariant', () => {
  it('turns the gate off and smoothing off, dropping the smoothed topic', () => {
    const result = tuningVariant(tanks());
    if (!result.ok) throw new Error('expected a valid variant');
    expect(result.config.gate.probability).toBe('off');
    expect(result.config.smoothing.lagSteps).toBe(0);
    expect(result.config.publish.smoothedTopic).toBeUndefined();
  });
});
