/**
 * `statecast report`: replays recordings in memory (with the batch smoother) and writes one
 * self-contained HTML page of the results: summary tables up front, then plots per entity.
 */
import { writeFile } from 'node:fs/promises';
import { basename } from 'node:path';
import { renderEntitySection } from './report-entity-section.js';
import { renderReportPage } from './report-html.js';
import { ReplayFailure, runReplay } from './replay-run.js';
import { parseFlags, positiveIntegerFlag, positiveNumberFlag, requiredFlag, UsageError } from './tool-args.js';
import { EXIT_FAILURE, EXIT_INTERRUPTED, EXIT_OK, EXIT_USAGE, type ToolIo } from './tool-io.js';

/** Entities drawn by default; more make a page too heavy to scroll. */
export const DEFAULT_REPORT_ENTITIES = 24;

/** The usage text of `statecast report`. */
export const REPORT_USAGE = `usage: statecast report --config FILE --in REC.jsonl [--in MORE.jsonl ...] --out report.html
                        [--entities N] [--health-interval-s S]

Replays the recordings (as statecast replay --smooth does) and writes one self-contained HTML
page: a summary per estimator and sensor, and per entity the filtered and smoothed estimates
with ±2σ bands, measurements, NIS against its bounds, the whiteness of the innovations and the
rejections by reason.

  --config FILE           daemon configuration (.yaml, .yml or .json)
  --in FILE               recording; repeat for rotated parts, in order
  --out FILE              the HTML page to write
  --entities N            entities to draw, in the order they first appear (default ${DEFAULT_REPORT_ENTITIES})
  --health-interval-s S   recording seconds between health evaluations (default 1)

Estimates are advisory and are not a safety function; defer to local codes and licensed practice.
`;

const FLAGS = { config: 'string', in: 'repeat', out: 'string', entities: 'string', 'health-interval-s': 'string' } as const;

/** Runs `statecast report`; resolves to the exit code (0, 1, 2, or 130 when interrupted). */
export async function runReportCommand(argv: readonly string[], io: ToolIo): Promise<number> {
  let args: { config: string; inputs: readonly string[]; out: string; entities: number; healthIntervalS: number };
  try {
    const flags = parseFlags(argv, FLAGS);
    if (flags.help) {
      io.stdout.write(REPORT_USAGE);
      return EXIT_OK;
    }
    const inputs = flags.lists.get('in') ?? [];
    if (inputs.length === 0) throw new UsageError('--in is required');
    args = {
      config: requiredFlag(flags, 'config'),
      inputs,
      out: requiredFlag(flags, 'out'),
      entities: positiveIntegerFlag(flags, 'entities', DEFAULT_REPORT_ENTITIES),
      healthIntervalS: positiveNumberFlag(flags, 'health-interval-s', 1),
    };
  } catch (error) {
    if (!(error instanceof UsageError)) throw error;
    io.stderr.write(`statecast report: ${error.message}\nrun "statecast report --help" for usage\n`);
    return EXIT_USAGE;
  }
  try {
    const { session, summary } = await runReplay({
      configPath: args.config,
      inputs: args.inputs,
      healthIntervalS: args.healthIntervalS,
      smooth: true,
      reportEntities: args.entities,
      output: null,
      drain: async () => undefined,
      label: 'report',
    }, io);
    const t0S = (summary.firstMs ?? 0) / 1000;
    const sections: string[] = [];
    let entityCount = 0;
    for (const est of session.estimators) {
      entityCount += est.entities.size;
      for (const entity of est.entities.values()) {
        if (entity.series !== null) sections.push(renderEntitySection(entity.series, est, t0S, sections.length));
      }
    }
    const page = renderReportPage({
      title: `statecast report: ${args.inputs.map((p) => basename(p)).join(', ')}`,
      summary,
      sections,
      entityCount,
    });
    await writeFile(args.out, page);
    io.stdout.write(`wrote ${args.out}: ${sections.length} of ${entityCount} entities${summary.interrupted ? ' (interrupted: partial data)' : ''}\n`);
    return summary.interrupted ? EXIT_INTERRUPTED : EXIT_OK;
  } catch (error) {
    if (error instanceof ReplayFailure) {
      io.stderr.write(`statecast report: ${error.message}\n`);
      return error.exitCode;
    }
    io.stderr.write(`statecast report: ${(error as Error).message}\n`);
    return EXIT_FAILURE;
  }
}
