/**
 * `statecast tune`: fits the free noise parameters of one estimator (its `tune` section) to a
 * recording by maximum likelihood, and prints the fit with intervals, the log-likelihood and NIS
 * test before and after, and the YAML to paste into the config.
 */
import { formatConfigIssues, type ConfigIssue } from '../config/config-error.js';
import { loadConfig } from '../config/load-config.js';
import { buildEstimatorRuntime } from '../engine/estimator-runtime.js';
import { readRecording, RecordingFormatError } from './recording-reader.js';
import { parseFlags, requiredFlag, UsageError, type ParsedFlags } from './tool-args.js';
import { EXIT_FAILURE, EXIT_INTERRUPTED, EXIT_OK, EXIT_USAGE, wallClockOf, type ToolIo } from './tool-io.js';
import type { FrozenEstimatorConfig } from './tune/config-patch.js';
import { RecordingDecoder } from './tune/entity-measurements.js';
import { fitNoiseParameters, summarizeFit, type FitProgress, type NoiseFit } from './tune/noise-fit.js';
import { tuneReportJson, tuneReportText, type EstimatorPlace } from './tune/tune-report.js';
import { buildTuneProblem, type TuneProblem } from './tune/tune-problem.js';

const USAGE = `usage: statecast tune --config FILE --in FILE.jsonl [--estimator NAME] [--start PATH=VALUE ...] [--json]
  fits the parameters listed in the estimator's tune.free to the recording by maximum likelihood
  --estimator   which estimator (default: the only one with a tune section)
  --start       start the search at VALUE instead of the configured value (repeatable)
  --json        print one JSON object instead of the report`;

/** Redraws the progress bar at most this often (ms). */
const PROGRESS_INTERVAL_MS = 100;
const BAR_WIDTH = 24;

function parseStarts(flags: ParsedFlags): Map<string, number> {
  const starts = new Map<string, number>();
  for (const item of flags.lists.get('start') ?? []) {
    const eq = item.lastIndexOf('=');
    const value = Number(item.slice(eq + 1));
    if (eq <= 0 || item.slice(eq + 1).trim() === '' || !Number.isFinite(value)) {
      throw new UsageError(`--start expects PATH=VALUE such as model.q=0.002, got "${item}"`);
    }
    starts.set(item.slice(0, eq), value);
  }
  return starts;
}

/** The estimator to tune: by name, or the only one with a tune section. */
function pickEstimator(estimators: readonly FrozenEstimatorConfig[], name: string | undefined): EstimatorPlace | string {
  if (name !== undefined) {
    const index = estimators.findIndex((e) => e.name === name);
    if (index < 0) return `--estimator: no estimator "${name}" (the config has ${estimators.map((e) => e.name).join(', ')})`;
    if (estimators[index]!.tune === undefined) return `estimators[${index}].tune: not set; name the parameters to fit in tune.free`;
    return { index, name };
  }
  const tunable = estimators.flatMap((e, index) => (e.tune === undefined ? [] : [{ index, name: e.name }]));
  if (tunable.length === 1) return tunable[0]!;
  if (tunable.length === 0) return 'no estimator has a tune section; add tune.free to the one to fit';
  return `several estimators have a tune section (${tunable.map((t) => t.name).join(', ')}); choose one with --estimator`;
}

function issuesAt(prefix: string, issues: readonly ConfigIssue[]): string {
  return formatConfigIssues(issues.map((i) => ({ path: i.path === '' ? prefix : `${prefix}.${i.path}`, message: i.message })));
}

function drawProgress(io: ToolIo, p: FitProgress): void {
  const done = Math.min(BAR_WIDTH, Math.round((p.iteration / p.maxIterations) * BAR_WIDTH));
  const bar = `${'#'.repeat(done)}${'-'.repeat(BAR_WIDTH - done)}`;
  io.stderr.write(`\r\x1b[2Ktune [${bar}] ${p.iteration}/${p.maxIterations} ℓ ${p.bestLogLikelihood.toFixed(2)}`);
}

/** Runs the search, yielding to the event loop between iterations so an abort can arrive. */
async function runFit(problem: TuneProblem, io: ToolIo): Promise<NoiseFit> {
  const now = wallClockOf(io);
  let lastDrawMs = Number.NEGATIVE_INFINITY;
  let last: FitProgress | null = null;
  const steps = fitNoiseParameters(problem);
  for (;;) {
    await new Promise<void>((resolve) => setImmediate(resolve));
    if (io.signal.aborted) {
      const best = last?.bestTheta ?? Float64Array.from(problem.free, (f) => f.start);
      return summarizeFit(problem, best, { iterations: last?.iteration ?? 0, evaluations: last?.evaluations ?? 0, converged: false, stopped: true });
    }
    const next = steps.next();
    if (next.done === true) return next.value;
    last = next.value;
    if (io.isTTY && now() - lastDrawMs >= PROGRESS_INTERVAL_MS) {
      drawProgress(io, last);
      lastDrawMs = now();
    }
  }
}

/** Prepares the problem or returns the exit code after reporting why not. */
async function prepare(flags: ParsedFlags, io: ToolIo): Promise<{ problem: TuneProblem; place: EstimatorPlace } | number> {
  const configPath = requiredFlag(flags, 'config');
  const inPath = requiredFlag(flags, 'in');
  const starts = parseStarts(flags);
  const loaded = loadConfig(configPath, io.env);
  if (!loaded.ok) {
    io.stderr.write(`tune: ${configPath}:\n${formatConfigIssues(loaded.issues)}\n`);
    return EXIT_USAGE;
  }
  const place = pickEstimator(loaded.config.estimators, flags.strings.get('estimator'));
  if (typeof place === 'string') {
    io.stderr.write(`tune: ${place}\n`);
    return EXIT_USAGE;
  }
  const config = loaded.config.estimators[place.index]!;
  const decoder = new RecordingDecoder(buildEstimatorRuntime(config));
  try {
    const read = await readRecording(inPath, decoder.add, { signal: io.signal });
    if (read.aborted) return EXIT_INTERRUPTED;
  } catch (err) {
    io.stderr.write(`tune: ${err instanceof RecordingFormatError ? err.message : `cannot read ${inPath}: ${(err as Error).message}`}\n`);
    return err instanceof RecordingFormatError ? EXIT_USAGE : EXIT_FAILURE;
  }
  const built = buildTuneProblem(config, decoder.finish(), starts);
  if (!built.ok) {
    io.stderr.write(`tune: ${issuesAt(`estimators[${place.index}]`, built.issues)}\n`);
    return EXIT_USAGE;
  }
  if (built.problem.recording.decoded === 0) {
    io.stderr.write(`tune: ${inPath} holds no measurement for estimator "${place.name}" (check the sensors' topics)\n`);
    return EXIT_USAGE;
  }
  return { problem: built.problem, place };
}

/**
 * `statecast tune --config FILE --in FILE.jsonl [--estimator NAME] [--start PATH=VALUE ...]
 * [--json]`. Exit 0 after a fit, 2 for bad usage, config or recording, 1 for I/O failures, 130
 * when io.signal aborted the search (the best values so far are still printed).
 */
export async function runTuneCommand(argv: readonly string[], io: ToolIo): Promise<number> {
  let flags: ParsedFlags;
  let prepared: { problem: TuneProblem; place: EstimatorPlace } | number;
  try {
    flags = parseFlags(argv, { config: 'string', in: 'string', estimator: 'string', start: 'repeat', json: 'boolean' });
    if (flags.help) {
      io.stdout.write(`${USAGE}\n`);
      return EXIT_OK;
    }
    prepared = await prepare(flags, io);
  } catch (err) {
    if (!(err instanceof UsageError)) throw err;
    io.stderr.write(`tune: ${err.message}\n${USAGE}\n`);
    return EXIT_USAGE;
  }
  if (typeof prepared === 'number') return prepared;
  const { problem, place } = prepared;
  const fit = await runFit(problem, io);
  if (io.isTTY) io.stderr.write('\r\x1b[2K');
  if (fit.stopped) io.stderr.write('tune: interrupted; printing the best values so far\n');
  const out = flags.switches.has('json') ? `${JSON.stringify(tuneReportJson(problem, fit, place), null, 2)}\n` : tuneReportText(problem, fit, place);
  io.stdout.write(out);
  return fit.stopped ? EXIT_INTERRUPTED : EXIT_OK;
}
