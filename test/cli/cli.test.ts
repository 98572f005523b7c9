import { execFile } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { APP_ERRORS } from '../../src/app-errors.js';

const run = promisify(execFile);
const BIN = join(import.meta.dirname, '../../bin/statecast.js');
let dir = '';

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'statecast-cli-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function cli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  try {
    const { stdout, stderr } = await run(process.execPath, [BIN, ...args], { timeout: 60_000 });
    return { code: 0, stdout, stderr };
  } catch (err) {
    const e = err as { code: number; stdout: string; stderr: string };
    return { code: e.code, stdout: e.stdout, stderr: e.stderr };
  }
}

describe('statecast CLI', () => {
  it('accepts each shipped example config', { timeout: 180_000 }, async () => {
    for (const file of ['minimal.yaml', 'tank-farm.yaml', 'vehicle-yard.yaml']) {
      const r = await cli(['check-config', join(import.meta.dirname, '../../config', file)]);
      expect(r.code, r.stderr).toBe(0);
      expect(r.stdout).toContain(': ok');
    }
  });

  it('lists every problem of a bad config by path and exits 2', { timeout: 120_000 }, async () => {
    const file = join(dir, 'bad.yaml');
    writeFileSync(file, [
      'estimators:',
      '  - name: lab',
      '    model: { type: random-walk, states: [temp], q: -1 }',
      '    sensors:',
      '      probe:',
      '        topic: lab/{probe}/temp',
      '        decode: { format: number }',
      '        measurement: { type: linear, reads: { temp: 1 }, sigmma: 0.2 }',
    ].join('\n'));
    const r = await cli(['check-config', file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('estimators[0].model.q');
    expect(r.stderr).toContain('estimators[0].sensors.probe.measurement');
    expect(r.stderr).toContain('sigmma');
  });

  it('prints a JSON Schema of the config', { timeout: 120_000 }, async () => {
    const r = await cli(['schema']);
    expect(r.code).toBe(0);
    const schema = JSON.parse(r.stdout) as Record<string, unknown>;
    expect(String(schema['$schema'])).toContain('2020-12');
    expect(JSON.stringify(schema)).toContain('estimators');
  });

  it('refuses an unknown command with a usage error', { timeout: 120_000 }, async () => {
    const r = await cli(['frobnicate']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('USAGE');
  });

  it('names the embedded broker port when it is taken, and exits 1', { timeout: 120_000 }, async () => {
    const blocker = createServer();
    await new Promise<void>((resolve) => blocker.listen(0, '127.0.0.1', resolve));
    const port = (blocker.address() as { port: number }).port;
    const file = join(dir, 'taken.yaml');
    writeFileSync(file, [
      `embeddedBroker: { port: ${port} }`,
      'http: { port: 0 }',
      `checkpoint: { enabled: false }`,
      'estimators:',
      '  - name: lab',
      '    model: { type: random-walk, states: [temp], q: 0.001 }',
      '    sensors:',
      '      probe: { topic: "lab/{probe}/temp", decode: { format: number }, measurement: { type: linear, reads: { temp: 1 }, sigma: 0.2 } }',
    ].join('\n'));
    const r = await cli(['run', '--config', file]);
    blocker.close();
    expect(r.code).toBe(1);
    expect(r.stderr).toContain('EMBEDDED_BROKER_PORT_IN_USE');
    expect(r.stderr).toContain(`127.0.0.1:${port}`);
  });
});

describe('error catalogue', () => {
  it('keys every entry by its own code', () => {
    for (const [key, entry] of Object.entries(APP_ERRORS)) expect(entry.code).toBe(key);
  });

  it('gives configuration and usage errors exit code 2 and the rest 1', () => {
    for (const entry of Object.values(APP_ERRORS)) {
      expect(entry.exitCode).toBe(entry.code.startsWith('CONFIG') || entry.code === 'USAGE' ? 2 : 1);
    }
  });
});
