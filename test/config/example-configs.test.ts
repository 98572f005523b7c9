import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { readFileSync } from 'node:fs';
import { loadConfig } from '../../src/config/load-config.js';
import { defaultDemoConfig } from '../../src/config/default-demo-config.js';
import type { ConfigResult } from '../../src/config/load-config.js';

const configDir = fileURLToPath(new URL('../../config/', import.meta.url));

function loaded(file: string) {
  const result: ConfigResult = loadConfig(configDir + file, {});
  if (!result.ok) throw new Error(`${file}: ${JSON.stringify(result.issues)}`);
  return result.config;
}

describe('example configs', () => {
  it.each(['tank-farm.yaml', 'vehicle-yard.yaml', 'minimal.yaml'])('%s loads without issues', (file) => {
    expect(loaded(file).estimators.length).toBeGreaterThan(0);
  });

  it.each(['tank-farm.yaml', 'vehicle-yard.yaml', 'minimal.yaml'])('%s says in its header that estimates are advisory', (file) => {
    const lines = readFileSync(configDir + file, 'utf8').split('\n').slice(0, 12);
    const header = lines.map((l) => l.replace(/^#\s?/, '')).join(' ');
    expect(header).toMatch(/advisory/i);
    expect(header).toMatch(/not a safety function/);
  });

  it('tank-farm.yaml holds the same estimator as the built-in demo', () => {
    expect(loaded('tank-farm.yaml').estimators).toEqual([defaultDemoConfig().estimators[0]]);
  });

  it('vehicle-yard.yaml holds the same estimator as the built-in demo', () => {
    expect(loaded('vehicle-yard.yaml').estimators).toEqual([defaultDemoConfig().estimators[1]]);
  });

  it('minimal.yaml leaves the broker to the embedded one', () => {
    const config = loaded('minimal.yaml');
    expect(config.broker.url).toBeUndefined();
    expect(config.embeddedBroker).toEqual({ host: '127.0.0.1', port: 18830 });
  });
});

describe('defaultDemoConfig', () => {
  it('runs the embedded broker and the simulator with both demo estimators', () => {
    const config = defaultDemoConfig();
    expect(config.broker.url).toBeUndefined();
    expect(config.simulator.enabled).toBe(true);
    expect(config.estimators.map((e) => e.name)).toEqual(['tanks', 'yard']);
  });

  it('names the tank rate state level_rate and the yard rates v_east and v_north', () => {
    const [tanks, yard] = defaultDemoConfig().estimators;
    expect(tanks?.model.type === 'composite' && tanks.model.blocks[0]).toMatchObject({ rateNames: ['level_rate'] });
    expect(yard?.model).toMatchObject({ rateNames: ['v_east', 'v_north'] });
  });

  it('returns a deep-frozen config', () => {
    const config = defaultDemoConfig();
    expect(Object.isFrozen(config)).toBe(true);
    expect(Object.isFrozen(config.estimators[1]?.sensors['gnss']?.measurement)).toBe(true);
  });

  it('applies environment overrides', () => {
    expect(defaultDemoConfig({ STATECAST_HTTP_PORT: '9001' }).http.port).toBe(9001);
  });
});
