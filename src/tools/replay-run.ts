/**
 * The part `replay` and `report` share: load the config, build a ReplaySession, stream each
 * input recording through it (draining output between chunks, drawing progress, stopping
 * cleanly on abort) and finish. Errors come back as a ReplayFailure with the exit code.
 */
import { basename } from 'node:path';
import { loadConfig } from '../config/load-config.js';
import { ProgressBar } from './progress-bar.js';
import { RecordingFormatError, readRecording } from './recording-reader.js';
import type { RecordingHeader } from './recording-format.js';
import type { ReplaySummary } from './replay-summary.js';
import { ReplaySession } from './replay-session.js';
import { EXIT_FAILURE, EXIT_USAGE, type ToolIo } from './tool-io.js';
import { count } from './replay-summary-text.js';
import type { ByteBlockWriter } from './byte-block-writer.js';

/** What to replay and what to keep. */
export interface ReplayRunInput {
  readonly configPath: string;
  readonly inputs: readonly string[];
  readonly healthIntervalS: number;
  readonly smooth: boolean;
  readonly reportEntities: number;
  /** Where output lines go (null: none). */
  readonly output: ByteBlockWriter | null;
  /** Awaited between input chunks (about 1 MiB each), e.g. to drain the output file. */
  readonly drain: () => Promise<void>;
  /** Label of the progress bar. */
  readonly label: string;
}

/** A finished (or interrupted) replay. */
export interface ReplayRunResult {
  readonly session: ReplaySession;
  readonly summary: ReplaySummary;
  readonly headers: readonly RecordingHeader[];
}

/** A replay that could not run; `exitCode` is EXIT_USAGE or EXIT_FAILURE. */
export class ReplayFailure extends Error {
  constructor(message: string, readonly exitCode: number) {
    super(message);
    this.name = 'ReplayFailure';
  }
}

/** Runs the replay; throws ReplayFailure for bad config, input format or unreadable files. */
export async function runReplay(input: ReplayRunInput, io: ToolIo): Promise<ReplayRunResult> {
  const loaded = loadConfig(input.configPath, io.env);
  if (!loaded.ok) {
    const issues = loaded.issues.map((i) => `  ${i.path === '' ? '' : `${i.path}: `}${i.message}`).join('\n');
    throw new ReplayFailure(`invalid configuration ${input.configPath}:\n${issues}`, EXIT_USAGE);
  }
  let session: ReplaySession;
  try {
    session = new ReplaySession({
      estimators: loaded.config.estimators,
      healthIntervalS: input.healthIntervalS,
      output: input.output,
      smooth: input.smooth,
      reportEntities: input.reportEntities,
    });
  } catch (error) {
    throw new ReplayFailure(`the configuration cannot run: ${(error as Error).message}`, EXIT_USAGE);
  }
  const progress = new ProgressBar(io, input.label);
  const headers: RecordingHeader[] = [];
  let interrupted = false;
  try {
    for (const [k, path] of input.inputs.entries()) {
      const name = input.inputs.length > 1 ? `${basename(path)} (${k + 1}/${input.inputs.length})` : basename(path);
      const result = await readRecording(path, (t, topic, payload) => session.handle(t, topic, payload), {
        signal: io.signal,
        afterChunk: async (done, total) => {
          progress.update(done, total, `${name}  ${count(session.engine.counters().received)} messages`);
          await input.drain();
        },
      });
      if (result.header !== null) headers.push(result.header);
      if (result.aborted) {
        interrupted = true;
        break;
      }
    }
  } catch (error) {
    progress.clear();
    if (error instanceof RecordingFormatError) throw new ReplayFailure(error.message, EXIT_USAGE);
    const code = (error as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EACCES' ? 'permission denied' : code === 'EISDIR' ? 'it is a directory' : null;
    if (why !== null) throw new ReplayFailure(`cannot read --in ${(error as NodeJS.ErrnoException).path ?? ''}: ${why}`, EXIT_USAGE);
    throw new ReplayFailure(`replay failed: ${(error as Error).message}`, EXIT_FAILURE);
  }
  progress.clear();
  const summary = session.finish(interrupted || io.signal.aborted, io.signal);
  return { session, summary, headers };
}
