import { describe, expect, it } from 'vitest';
import { stringify } from 'yaml';
import { loadConfig, parseConfig } from '../../src/config/load-config.js';
import { issuesOf, labEstimator, tempFile } from './config-fixtures.js';

const minimal = { estimators: [labEstimator()] };

describe('loadConfig', () => {
  it('reads a .yaml file', () => {
    const result = loadConfig(tempFile('a.yaml', stringify(minimal)), {});
    expect(result.ok).toBe(true);
  });

  it('reads a .yml file as YAML', () => {
    const result = loadConfig(tempFile('a.yml', stringify(minimal)), {});
    expect(result.ok).toBe(true);
  });

  it('reads a .json file', () => {
    const result = loadConfig(tempFile('a.json', JSON.stringify(minimal)), {});
    expect(result.ok).toBe(true);
  });

  it('reports a YAML syntax error with its line and column', () => {
    const text = 'log:\n  level: info\n  pretty: [true\nestimators: []\n';
    const result = loadConfig(tempFile('bad.yaml', text), {});
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.issues[0]?.path).toBe('');
    expect(result.issues[0]?.message).toMatch(/^YAML syntax error at line \d+, column \d+: /);
  });

  it('reports the line of a duplicate YAML key', () => {
    const text = 'log:\n  level: info\n  level: debug\n';
    const result = loadConfig(tempFile('dup.yaml', text), {});
    expect(!result.ok && result.issues[0]?.message).toMatch(/line 3, column 3/);
  });

  it('reports a JSON syntax error with its line and column', () => {
    const result = loadConfig(tempFile('bad.json', '{\n  "log": {\n    "level": "info",\n  }\n}'), {});
    expect(!result.ok && result.issues[0]?.message).toMatch(/^JSON syntax error at line 4, column 3: /);
  });

  it('refuses a file whose extension names no known format', () => {
    const result = loadConfig(tempFile('a.toml', ''), {});
    expect(!result.ok && result.issues[0]?.message).toMatch(/\.yaml, \.yml or \.json/);
  });

  it('reports a missing file', () => {
    const result = loadConfig('/nonexistent/statecast.yaml', {});
    expect(!result.ok && result.issues[0]?.message).toMatch(/no such file/);
  });

  it('reports an empty file', () => {
    const result = loadConfig(tempFile('empty.yaml', '# nothing\n'), {});
    expect(!result.ok && result.issues[0]?.message).toBe('the configuration is empty');
  });
});

describe('parseConfig issues', () => {
  it('reports every mistake across estimators by path', () => {
    const a = labEstimator('a');
    const b = labEstimator('b');
    (a['sensors'] as any).probe.measurement.sigma = -1;
    (b['sensors'] as any).probe.measurement.sigma = 0;
    b['gate'] = { sigmma: 0.99 };
    expect(issuesOf({ estimators: [a, b] })).toEqual([
      { path: 'estimators[0].sensors.probe.measurement.sigma', message: 'expected a positive number' },
      { path: 'estimators[1].gate', message: 'unknown key "sigmma"' },
      { path: 'estimators[1].sensors.probe.measurement.sigma', message: 'expected a positive number' },
    ]);
  });

  it('suggests the nearest known key for a misspelt one', () => {
    const e = labEstimator();
    e['history'] = { horizonSec: 60 };
    expect(issuesOf({ estimators: [e] })).toContainEqual({
      path: 'estimators[0].history',
      message: 'unknown key "horizonSec" (did you mean "horizonS"?)',
    });
  });

  it('says "required" for a missing field', () => {
    const e = labEstimator();
    delete (e['model'] as any).q;
    expect(issuesOf({ estimators: [e] })).toEqual([{ path: 'estimators[0].model.q', message: 'required' }]);
  });

  it('lists the allowed values of a wrong discriminator', () => {
    const e = labEstimator();
    (e['sensors'] as any).probe.decode.format = 'xml';
    expect(issuesOf({ estimators: [e] })).toEqual([
      { path: 'estimators[0].sensors.probe.decode.format', message: 'expected one of "json", "number", "csv"' },
    ]);
  });

  it('rejects an empty estimator list', () => {
    expect(issuesOf({ estimators: [] })).toEqual([{ path: 'estimators', message: 'expected at least 1 entry' }]);
  });

  it('says an integer is expected for a fractional port', () => {
    expect(issuesOf({ ...minimal, http: { port: 80.5 } })).toEqual([
      { path: 'http.port', message: 'expected an integer, got 80.5' },
    ]);
  });

  it('refuses a non-loopback HTTP host without a token', () => {
    expect(issuesOf({ ...minimal, http: { host: '0.0.0.0' } })).toEqual([
      expect.objectContaining({ path: 'http.host' }),
    ]);
  });

  it('accepts a non-loopback HTTP host with a token', () => {
    const result = parseConfig({ ...minimal, http: { host: '0.0.0.0' }, auth: { token: 'x'.repeat(16) } }, {});
    expect(result.ok).toBe(true);
  });

  it('fills defaults with their documented values', () => {
    const result = parseConfig(minimal, {});
    if (!result.ok) throw new Error('expected ok');
    const [e] = result.config.estimators;
    expect(result.config.http.port).toBe(8470);
    expect(result.config.broker.protocolVersion).toBe(5);
    expect(e?.filter.kind).toBe('ekf');
    expect(e?.gate.probability).toBe(0.99);
    expect(e?.prior.defaultSigma).toBe(1000);
    expect(e?.publish.topic).toBe('statecast/{estimator}/{entity}/estimate');
  });
});

describe('environment overrides', () => {
  it('sets each documented field', () => {
    const result = parseConfig(minimal, {
      STATECAST_BROKER_URL: 'mqtt://127.0.0.1:1884',
      STATECAST_BROKER_USERNAME: 'farm',
      STATECAST_BROKER_PASSWORD: 'hunter22',
      STATECAST_API_TOKEN: 'abcdefghijklmnop',
      STATECAST_HTTP_PORT: '9000',
      STATECAST_HTTP_HOST: '127.0.0.2',
      STATECAST_STATE_DIR: '/var/lib/statecast',
      STATECAST_LOG_LEVEL: 'debug',
    });
    if (!result.ok) throw new Error(JSON.stringify(result.issues));
    const c = result.config;
    expect([c.broker.url, c.broker.username, c.broker.password, c.auth.token]).toEqual([
      'mqtt://127.0.0.1:1884',
      'farm',
      'hunter22',
      'abcdefghijklmnop',
    ]);
    expect([c.http.port, c.http.host, c.checkpoint.directory, c.log.level]).toEqual([9000, '127.0.0.2', '/var/lib/statecast', 'debug']);
  });

  it('wins over the file', () => {
    const result = parseConfig({ ...minimal, log: { level: 'warn' } }, { STATECAST_LOG_LEVEL: 'error' });
    expect(result.ok && result.config.log.level).toBe('error');
  });

  it('ignores an empty variable', () => {
    const result = parseConfig({ ...minimal, log: { level: 'warn' } }, { STATECAST_LOG_LEVEL: '' });
    expect(result.ok && result.config.log.level).toBe('warn');
  });

  it('names the variable in an issue about an overridden field', () => {
    expect(issuesOf(minimal, { STATECAST_HTTP_PORT: 'eighty' })).toEqual([
      { path: 'http.port', message: 'expected a number, got "eighty" (from STATECAST_HTTP_PORT)' },
    ]);
  });

  it('freezes its result but not the caller\'s object', () => {
    const raw = { estimators: [labEstimator()] };
    const result = parseConfig(raw, {});
    expect(result.ok && Object.isFrozen(result.config.estimators[0]?.model)).toBe(true);
    expect(Object.isFrozen(raw.estimators[0]?.['model'])).toBe(false);
  });

  it('leaves the caller\'s object unchanged', () => {
    const raw = { ...minimal, log: { level: 'warn' } };
    parseConfig(raw, { STATECAST_LOG_LEVEL: 'debug' });
    expect(raw.log.level).toBe('warn');
  });
});
