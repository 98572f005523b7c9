import { describe, expect, it } from 'vitest';
import { parse } from 'yaml';
import { tanksEstimatorInput } from '../../../src/config/default-demo-config.js';
import { parseConfig } from '../../../src/config/load-config.js';
import { fittedYamlSnippet, roundSignificant } from '../../../src/tools/tune/fitted-yaml-snippet.js';

function tanks() {
  const parsed = parseConfig({ estimators: [tanksEstimatorInput()] }, {});
  if (!parsed.ok) throw new Error('demo config invalid');
  return parsed.config.estimators[0]!;
}

describe('fittedYamlSnippet', () => {
  it('nests each fitted value under its keys, rounded to 3 significant figures', () => {
    const text = fittedYamlSnippet(tanks(), new Map([['sensors.level.measurement.sigma', 0.021234], ['sensors.pressure.measurement.sigma', 0.0051249]]));
    expect(parse(text)).toEqual({ sensors: { level: { measurement: { sigma: 0.0212 } }, pressure: { measurement: { sigma: 0.00512 } } } });
  });

  it('writes a list on the path whole, with the fitted entry replaced', () => {
    const text = fittedYamlSnippet(tanks(), new Map([['model.blocks[1].tauS', 3412.7]]));
    const blocks = (parse(text) as { model: { blocks: Record<string, unknown>[] } }).model.blocks;
    expect(blocks).toHaveLength(2);
    expect(blocks[0]).toMatchObject({ type: 'constant-velocity', q: 1e-6 });
    expect(blocks[1]).toEqual({ type: 'gauss-markov', state: 'pressure_bias', tauS: 3410, sigma: 0.03 });
  });

  it('writes very small values in exponent form that parse back exactly', () => {
    const text = fittedYamlSnippet(tanks(), new Map([['model.blocks[0].q', 1.23456e-7]]));
    expect(text).toContain('q: 1.23e-7');
    expect((parse(text) as { model: { blocks: { q: number }[] } }).model.blocks[0]!.q).toBe(1.23e-7);
  });
});

describe('roundSignificant', () => {
  it('keeps three significant figures', () => {
    expect([roundSignificant(0.0020352), roundSignificant(146.91), roundSignificant(1.0)]).toEqual([0.00204, 147, 1]);
  });
});
