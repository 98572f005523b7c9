import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse, stringify } from 'yaml';
import { parseParameterPath, readParameterPath } from '../../../src/config/tune-schema.js';
import { recordingHeaderLine, recordingTextLine } from '../../../src/tools/recording-format.js';
import type { ToolIo } from '../../../src/tools/tool-io.js';
import { runTuneCommand } from '../../../src/tools/tune-command.js';
import { roundSignificant } from '../../../src/tools/tune/fitted-yaml-snippet.js';
import { probeEstimator, probeRecording } from './tune-fixtures.js';

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs the command against collecting sinks; `onStderr` may abort through the controller. */
async function run(argv: string[], options: { isTTY?: boolean; onStderr?: (text: string, abort: () => void) => void } = {}): Promise<Run> {
  const controller = new AbortController();
  let stdout = '';
  let stderr = '';
  const io: ToolIo = {
    stdout: { write: (s: string) => (stdout += s) },
    stderr: {
      write: (s: string) => {
        stderr += s;
        options.onStderr?.(s, () => controller.abort());
      },
    },
    isTTY: options.isTTY ?? false,
    signal: controller.signal,
    env: {},
  };
  const code = await runTuneCommand(argv, io);
  return { code, stdout, stderr };
}

/** The YAML after the paste hint, parsed. */
function snippetOf(stdout: string): unknown {
  const at = stdout.indexOf('YAML to paste');
  return parse(stdout.slice(stdout.indexOf('\n', at) + 1));
}

describe('statecast tune', () => {
  let dir: string;
  let config: string;
  let recording: string;
  let text: Run;
  let json: Run;
  const paths = ['model.q', 'sensors.temp.measurement.sigma'];

  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'statecast-tune-'));
    config = join(dir, 'probes.yaml');
    recording = join(dir, 'probes.jsonl');
    writeFileSync(config, stringify({ estimators: [probeEstimator(0.01, 0.75)] }));
    const lines = probeRecording('3', 0.002, 0.15, 800).map((m) => recordingTextLine(m.t, m.topic, new TextDecoder().decode(m.payload)));
    writeFileSync(recording, recordingHeaderLine('2026-01-01T00:00:00.000Z', 'simulator:tank-farm') + lines.join(''));
    text = await run(['--config', config, '--in', recording]);
    json = await run(['--config', config, '--in', recording, '--json']);
  });

  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('exits 0 after a fit', () => {
    expect([text.code, json.code]).toEqual([0, 0]);
  });

  it('prints a YAML snippet that parses back to the fitted values', () => {
    const report = JSON.parse(json.stdout) as { parameters: { path: string; fitted: number }[] };
    const snippet = snippetOf(text.stdout);
    for (const p of report.parameters) {
      expect(readParameterPath(snippet, parseParameterPath(p.path)!)).toBe(roundSignificant(p.fitted));
    }
    expect(report.parameters.map((p) => p.path)).toEqual(paths);
  });

  it('reports ℓ at the start and at the fit, the fit being higher', () => {
    const report = JSON.parse(json.stdout) as { logLikelihood: { start: number; fitted: number } };
    expect(report.logLikelihood.fitted).toBeGreaterThan(report.logLikelihood.start);
    expect(text.stdout).toMatch(/log-likelihood: start -?\d+\.\d\d, fitted -?\d+\.\d\d/);
  });

  it('reports the NIS test before and after', () => {
    expect(text.stdout).toMatch(/NIS mean \(N = 799, 95% band 0\.\d{3} … 1\.\d{3}\): start 0\.\d{3} \(outside\), fitted \d\.\d{3} \(inside\)/);
  });

  it('prints an interval beside each fitted value', () => {
    for (const path of paths) expect(text.stdout).toMatch(new RegExp(`${path.replaceAll('.', '\\.')}\\s+\\S+\\s+\\S+\\s+\\S+ … \\S+`));
  });

  it('draws no progress bar when stderr is not a terminal', () => {
    expect(text.stderr).toBe('');
  });

  it('starts where --start says', async () => {
    const r = await run(['--config', config, '--in', recording, '--json', '--start', 'model.q=0.003', '--start', 'sensors.temp.measurement.sigma=0.2']);
    const report = JSON.parse(r.stdout) as { parameters: { start: number }[] };
    expect(report.parameters.map((p) => p.start)).toEqual([0.003, 0.2]);
  });

  it('stops on abort, prints the best values so far and exits 130', async () => {
    const r = await run(['--config', config, '--in', recording], {
      isTTY: true,
      onStderr: (s, abort) => {
        if (s.includes('tune [')) abort();
      },
    });
    expect(r.code).toBe(130);
    expect(r.stderr).toContain('tune [');
    expect(r.stdout).toContain('search: stopped early, best so far after 1 iteration,');
    expect(snippetOf(r.stdout)).toHaveProperty('model.q');
  });

  it('refuses a start for a path that is not free, naming it', async () => {
    const r = await run(['--config', config, '--in', recording, '--start', 'model.states=1']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('estimators[0].model.states: is not a free parameter of tune.free');
  });

  it('refuses a malformed --start', async () => {
    const r = await run(['--config', config, '--in', recording, '--start', 'model.q']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--start expects PATH=VALUE');
  });

  it('requires --in', async () => {
    const r = await run(['--config', config]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--in is required');
  });

  it('refuses an estimator without a tune section', async () => {
    const plain = join(dir, 'plain.yaml');
    const { tune: _tune, ...estimator } = probeEstimator(0.01, 0.75);
    writeFileSync(plain, stringify({ estimators: [estimator] }));
    const r = await run(['--config', plain, '--in', recording]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('no estimator has a tune section');
  });

  it('names the line of a malformed recording', async () => {
    const bad = join(dir, 'bad.jsonl');
    writeFileSync(bad, `${recordingHeaderLine('2026-01-01T00:00:00.000Z', 'simulator:tank-farm')}not json\n`);
    const r = await run(['--config', config, '--in', bad]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`${bad}:2:`);
  });
});
