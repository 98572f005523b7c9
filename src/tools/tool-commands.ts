/**
 * The offline commands the CLI dispatches to, loaded on demand so `statecast run` does not
 * load the tools' code.
 */
import type { ToolCommand, ToolIo } from './tool-io.js';

/** Command name → loader of its implementation. */
export const TOOL_COMMANDS: Readonly<Record<string, () => Promise<ToolCommand>>> = {
  record: async () => (await import('./record-command.js')).runRecordCommand,
  replay: async () => (await import('./replay-command.js')).runReplayCommand,
  report: async () => (await import('./report-command.js')).runReportCommand,
  tune: async () => (await import('./tune-command.js')).runTuneCommand,
};

/** The ToolIo of the real process: stdio, and SIGINT as an abort (a second SIGINT exits at once). */
export function processToolIo(): ToolIo {
  const controller = new AbortController();
  process.on('SIGINT', () => {
    if (controller.signal.aborted) process.exit(130);
    controller.abort();
  });
  return {
    stdout: process.stdout,
    stderr: process.stderr,
    isTTY: process.stderr.isTTY === true,
    signal: controller.signal,
    env: process.env,
  };
}
