/**
 * Runs the real daemon (`node bin/statecast.js run --config FILE`) as a child process for the
 * browser tests: resolves with the dashboard URL it prints, keeps the last lines of its logs
 * for failure messages, and stops it with SIGTERM (SIGKILL past a deadline).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { once } from 'node:events';
import { fileURLToPath } from 'node:url';

/** The repository root (the daemon's working directory). */
export const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** A started daemon. */
export interface DaemonProcess {
  /** The dashboard's base URL, e.g. `http://127.0.0.1:40123/`. */
  readonly url: string;
  /** Date.now() when the URL was printed: the daemon (and its simulator) had started by then. */
  readonly readyAtMs: number;
  /** The last lines the daemon wrote to stderr (its logs). */
  logTail(): string;
  /** Stops the daemon and waits for it to exit. Idempotent. */
  stop(): Promise<void>;
}

const TAIL_LINES = 40;

/** Starts the daemon with `configFile` (relative to the repository root) within `startupMs`. */
export async function startDaemon(configFile: string, startupMs: number): Promise<DaemonProcess> {
  const child = spawn(process.execPath, ['bin/statecast.js', 'run', '--config', configFile], {
    cwd: REPO_ROOT,
    stdio: ['ignore', 'pipe', 'pipe'],
    env: { ...process.env, NO_COLOR: '1' },
  });
  const tail: string[] = [];
  child.stderr!.setEncoding('utf8').on('data', (chunk: string) => {
    tail.push(...chunk.split('\n').filter((l) => l !== ''));
    tail.splice(0, Math.max(0, tail.length - TAIL_LINES));
  });
  const logTail = () => tail.join('\n');
  const stop = stopper(child);
  try {
    const url = await printedUrl(child, startupMs, logTail);
    return { url, readyAtMs: Date.now(), logTail, stop };
  } catch (error) {
    await stop();
    throw error;
  }
}

function printedUrl(child: ChildProcess, startupMs: number, logTail: () => string): Promise<string> {
  return new Promise((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => fail(`the daemon printed no dashboard URL within ${startupMs} ms`), startupMs);
    const fail = (why: string) => {
      clearTimeout(timer);
      reject(new Error(`${why}\n--- daemon log ---\n${logTail()}\n--- stdout ---\n${out}`));
    };
    child.stdout!.setEncoding('utf8').on('data', (chunk: string) => {
      out += chunk;
      const m = /dashboard\s+(http:\/\/\S+)/.exec(out);
      if (m !== null) {
        clearTimeout(timer);
        resolve(m[1]!);
      }
    });
    child.once('exit', (code, signal) => fail(`the daemon exited (code ${code}, signal ${signal}) before it was ready`));
  });
}

function stopper(child: ChildProcess): () => Promise<void> {
  let stopping: Promise<void> | null = null;
  return () => {
    stopping ??= (async () => {
      if (child.exitCode !== null || child.signalCode !== null) return;
      const exited = once(child, 'exit');
      child.kill('SIGTERM');
      const timer = setTimeout(() => child.kill('SIGKILL'), 12_000);
      await exited;
      clearTimeout(timer);
    })();
    return stopping;
  };
}
