/**
 * What an offline command may touch of the outside world. Only src/cli.ts reads process.*; it
 * builds one of these and passes it in, so tests can run a command against buffers, a fake
 * clock and an AbortController.
 */
import type { Env } from '../config/load-config.js';

/** Anything that takes text: a stream, or a test's collecting buffer. */
export interface TextSink {
  write(text: string): unknown;
}

/** The injected environment of an offline command. */
export interface ToolIo {
  /** Command output (summaries, JSON). */
  readonly stdout: TextSink;
  /** Errors, warnings and the progress bar. */
  readonly stderr: TextSink;
  /** True when stderr is a terminal: only then is a progress bar drawn. */
  readonly isTTY: boolean;
  /** Aborted on Ctrl-C: the command stops, writes what it has and returns EXIT_INTERRUPTED. */
  readonly signal: AbortSignal;
  /** Environment variables (config overrides). */
  readonly env: Env;
  /**
   * Wall clock in epoch milliseconds, used only to pace the progress bar and to stamp messages
   * as `record` receives them; Date.now when absent. Replays never read it.
   */
  readonly nowMs?: () => number;
}

/** An offline command: parses argv, does its work through io, resolves to its exit code. */
export type ToolCommand = (argv: readonly string[], io: ToolIo) => Promise<number>;

/** The command succeeded. */
export const EXIT_OK = 0;
/** The command ran but failed (I/O, broker). */
export const EXIT_FAILURE = 1;
/** Bad usage, configuration or input format: nothing useful was done. */
export const EXIT_USAGE = 2;
/** Stopped by io.signal (128 + SIGINT, as shells report Ctrl-C); partial results were written. */
export const EXIT_INTERRUPTED = 130;

/** The wall clock of an io (Date.now when it has none). */
export function wallClockOf(io: ToolIo): () => number {
  return io.nowMs ?? Date.now;
}
