import { spawn } from 'node:child_process';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { mosquittoBinary } from '../helpers/mosquitto.js';
import { REPO_ROOT } from '../helpers/soak-daemon.js';
import type { SoakResult } from './soak-harness.js';
import type { SoakVerdicts } from './soak-report.js';

const hasMosquitto = mosquittoBinary() !== null;
if (!hasMosquitto) console.warn('mosquitto is not installed: skipping the short soak');

/**
 * The soak for CI: 30 s of the scaled vehicle yard (10,000 tractors, 20,000 measurements/s) through
 * the same CLI as `npm run soak`, in its own process. It asserts counts only — no accepted
 * measurement lost, the daemon still up — and prints the figures; speed and memory targets are
 * read from the printout, never asserted.
 */
const cleanups: (() => Promise<unknown>)[] = [];
afterAll(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup().catch(() => undefined);
});

async function runShortSoak(): Promise<{ code: number | null; output: string; result: SoakResult; verdicts: SoakVerdicts }> {
  const dir = await mkdtemp(join(tmpdir(), 'statecast-soak-'));
  cleanups.push(() => rm(dir, { recursive: true, force: true }));
  const jsonPath = join(dir, 'soak.json');
  const child = spawn(process.execPath, ['--expose-gc', '--import', 'tsx', 'test/soak/run-soak.ts', '--minutes', '0.5', '--json', jsonPath], {
    cwd: REPO_ROOT,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  // The soak cleans up its broker and daemon on SIGTERM; a test that fails still sends it.
  cleanups.push(async () => {
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGTERM');
  });
  let output = '';
  child.stdout.setEncoding('utf8').on('data', (chunk: string) => (output += chunk));
  child.stderr.setEncoding('utf8').on('data', (chunk: string) => (output += chunk));
  const code = await new Promise<number | null>((resolve) => child.once('exit', (c) => resolve(c)));
  const json = await readFile(jsonPath, 'utf8').catch(() => {
    throw new Error(`the soak wrote no result (exit code ${code}):\n${output.slice(-4000)}`);
  });
  const parsed = JSON.parse(json) as { result: SoakResult; verdicts: SoakVerdicts };
  return { code, output, ...parsed };
}

// The CI soak: runs wherever Mosquitto is installed (STATECAST_SOAK_SHORT=0 skips it on a
// machine that must not spend two minutes on it). It used to run only on request,
// because the daemon (then about 100 µs of CPU per measurement) lost measurements at this rate;
// at about 45-60 µs it keeps every accepted measurement, while the lag and RSS targets are read
// from the printout.
const soakRequested = process.env['STATECAST_SOAK_SHORT'] !== '0';
if (!soakRequested) console.warn('short soak turned off (STATECAST_SOAK_SHORT=0): skipped');

describe.skipIf(!hasMosquitto || !soakRequested)('soak (30 s, 10,000 tractors)', () => {
  it('loses no accepted measurement and the daemon stays up', { timeout: 900_000 }, async () => {
    const { code, output, result, verdicts } = await runShortSoak();
    console.log(output.slice(output.indexOf('statecast soak:')));
    expect(result.traffic.published).toBeGreaterThan(0);
    expect(verdicts.lostBeforeDaemon).toBe(0);
    expect(verdicts.estimatesNotProduced).toBe(0);
    expect(result.daemonUp).toBe(true);
    expect(code).toBe(0);
  });
});
