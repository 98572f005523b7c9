/**
 * `statecast replay`: runs recordings through the daemon's estimation path as fast as the CPU
 * allows, deterministically (recording time is the only clock), writing every estimate as a
 * JSON line and a consistency summary. See estimate-line.ts for the output format.
 */
import { LineFileSink } from './line-file-sink.js';
import { formatReplaySummary } from './replay-summary-text.js';
import { ReplayFailure, runReplay } from './replay-run.js';
import { parseFlags, positiveNumberFlag, requiredFlag, UsageError } from './tool-args.js';
import { EXIT_FAILURE, EXIT_INTERRUPTED, EXIT_OK, EXIT_USAGE, type ToolIo } from './tool-io.js';

/** The usage text of `statecast replay`. */
export const REPLAY_USAGE = `usage: statecast replay --config FILE --in REC.jsonl [--in MORE.jsonl ...] --out EST.jsonl
                        [--smooth] [--json] [--health-interval-s S]

Feeds recorded messages to the estimators of the config, using each message's recorded
arrival time as the clock, and writes one JSON line per estimate to --out. Ends with a summary
per estimator and sensor (accepted, late, rejected by reason, windowed-NIS consistency, and
NEES/RMSE against ground truth when the recording has sim/truth/... topics).

  --config FILE           daemon configuration (.yaml, .yml or .json)
  --in FILE               recording to replay; repeat for rotated parts, in order
  --out FILE              estimate lines (JSON Lines); /dev/null to keep only the summary
  --smooth                afterwards, a whole-batch RTS smoothing pass per entity
                          (lines with "kind":"smoothed")
  --json                  print the summary as JSON instead of text
  --health-interval-s S   recording seconds between health evaluations (default 1)

Estimates are advisory and are not a safety function: do not use them as the only input to
the control of water systems or vehicles; defer to local codes and licensed practice.
`;

const FLAGS = { config: 'string', in: 'repeat', out: 'string', smooth: 'boolean', json: 'boolean', 'health-interval-s': 'string' } as const;

/** Runs `statecast replay`; resolves to the exit code (0, 1, 2, or 130 when interrupted). */
export async function runReplayCommand(argv: readonly string[], io: ToolIo): Promise<number> {
  let args: { config: string; inputs: readonly string[]; out: string; smooth: boolean; json: boolean; healthIntervalS: number };
  try {
    const flags = parseFlags(argv, FLAGS);
    if (flags.help) {
      io.stdout.write(REPLAY_USAGE);
      return EXIT_OK;
    }
    const inputs = flags.lists.get('in') ?? [];
    if (inputs.length === 0) throw new UsageError('--in is required');
    args = {
      config: requiredFlag(flags, 'config'),
      inputs,
      out: requiredFlag(flags, 'out'),
      smooth: flags.switches.has('smooth'),
      json: flags.switches.has('json'),
      healthIntervalS: positiveNumberFlag(flags, 'health-interval-s', 1),
    };
    if (inputs.includes(args.out)) throw new UsageError(`--out ${args.out} is also an --in file`);
  } catch (error) {
    if (!(error instanceof UsageError)) throw error;
    io.stderr.write(`statecast replay: ${error.message}\nrun "statecast replay --help" for usage\n`);
    return EXIT_USAGE;
  }
  let sink: LineFileSink;
  try {
    sink = await LineFileSink.open(args.out);
  } catch (error) {
    io.stderr.write(`statecast replay: cannot write --out ${args.out}: ${(error as Error).message}\n`);
    return EXIT_USAGE;
  }
  try {
    const { summary } = await runReplay({
      configPath: args.config,
      inputs: args.inputs,
      healthIntervalS: args.healthIntervalS,
      smooth: args.smooth,
      reportEntities: 0,
      output: sink.out,
      drain: () => sink.drain(),
      label: 'replay',
    }, io);
    await sink.close();
    io.stdout.write(args.json ? `${JSON.stringify(summary, null, 2)}\n` : formatReplaySummary(summary));
    if (summary.interrupted) io.stderr.write(`statecast replay: interrupted; ${args.out} holds the estimates made so far\n`);
    return summary.interrupted ? EXIT_INTERRUPTED : EXIT_OK;
  } catch (error) {
    await sink.close().catch(() => undefined);
    if (error instanceof ReplayFailure) {
      io.stderr.write(`statecast replay: ${error.message}\n`);
      return error.exitCode;
    }
    io.stderr.write(`statecast replay: ${(error as Error).message}\n`);
    return EXIT_FAILURE;
  }
}
