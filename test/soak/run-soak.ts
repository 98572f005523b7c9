/**
 * `npm run soak -- --minutes N [--entities 10000] [--rate 20000] [--seed 7] [--scrape-every 15] [--no-checkpoints] [--json FILE]`
 *
 * Runs the soak (see soak-harness.ts) and prints its figures beside the targets. Exit code 0
 * when no accepted measurement was lost and the daemon stayed up, 1 otherwise, 2 for bad
 * arguments. Ctrl-C ends the load early; the run is still drained, reported and cleaned up.
 */
import { writeFile } from 'node:fs/promises';
import { runSoak, type SoakOptions } from './soak-harness.js';
import { formatSoakReport, soakVerdicts } from './soak-report.js';

const USAGE = 'usage: npm run soak -- --minutes N [--entities 10000] [--rate 20000] [--seed 7] [--scrape-every 15] [--no-checkpoints] [--json FILE]';

function parseArgs(argv: readonly string[]): { options: Omit<SoakOptions, 'log' | 'signal' | 'daemonNodeArgs'>; json: string | undefined } {
  let minutes = Number.NaN;
  let entities = 10_000;
  let ratePerS = 20_000;
  let seed = 7;
  let checkpoints = true;
  let scrapeEveryS = 15;
  let json: string | undefined;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    const value = (): number => {
      const n = Number(argv[++i]);
      if (!Number.isFinite(n) || n <= 0) throw new Error(`${a} needs a positive number\n${USAGE}`);
      return n;
    };
    if (a === '--minutes') minutes = value();
    else if (a === '--entities') entities = Math.round(value());
    else if (a === '--rate') ratePerS = value();
    else if (a === '--seed') seed = Math.round(value());
    else if (a === '--scrape-every') scrapeEveryS = value();
    else if (a === '--no-checkpoints') checkpoints = false;
    else if (a === '--json') json = argv[++i];
    else throw new Error(`unknown argument ${a}\n${USAGE}`);
  }
  if (!Number.isFinite(minutes)) throw new Error(`--minutes is required\n${USAGE}`);
  return { options: { durationS: minutes * 60, entities, ratePerS, seed, checkpoints, sampleEveryS: 5, scrapeEveryS }, json };
}

async function main(): Promise<number> {
  let parsed;
  try {
    parsed = parseArgs(process.argv.slice(2));
  } catch (error) {
    process.stderr.write(`${(error as Error).message}\n`);
    return 2;
  }
  const abort = new AbortController();
  const onSignal = (): void => {
    process.stderr.write('soak: stopping the load early; draining and cleaning up\n');
    abort.abort();
  };
  process.once('SIGINT', onSignal);
  process.once('SIGTERM', onSignal);
  // STATECAST_SOAK_DAEMON_NODE_ARGS="--cpu-prof --cpu-prof-dir=/tmp/prof" profiles the daemon.
  const daemonNodeArgs = (process.env['STATECAST_SOAK_DAEMON_NODE_ARGS'] ?? '').split(' ').filter((a) => a !== '');
  const result = await runSoak({ ...parsed.options, daemonNodeArgs, log: (line) => process.stdout.write(`${line}\n`), signal: abort.signal });
  process.stdout.write(`\n${formatSoakReport(result)}`);
  if (parsed.json !== undefined) await writeFile(parsed.json, JSON.stringify({ result, verdicts: soakVerdicts(result) }, null, 2));
  return soakVerdicts(result).noLoss && result.daemonUp ? 0 : 1;
}

main().then(
  (code) => process.exit(code),
  (error: unknown) => {
    process.stderr.write(`soak failed: ${error instanceof Error ? error.stack ?? error.message : String(error)}\n`);
    process.exit(1);
  },
);
