/**
 * The real daemon as a child process for the worst-day suites (soak, faults, hostile input):
 * `node bin/statecast.js run --config <temp>.json` with HTTP on a kernel-chosen port, its JSON
 * log lines collected from stderr so a test can await them, and a stop that always ends the
 * process (SIGTERM, then SIGKILL at a deadline) even when the test failed.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parsePrometheusText, type PromFamily } from './prometheus-text.js';

/** The repository root (the daemon runs from here, so `tsx` and `node_modules` resolve). */
export const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** One pino line from the daemon's stderr (`msg` is the message; other fields as logged). */
export interface DaemonLogLine {
  readonly level: number;
  readonly msg: string;
  readonly [field: string]: unknown;
}

/** How to start the daemon. */
export interface SoakDaemonOptions {
  /** The configuration as written (http.port is forced to 0 unless given). */
  readonly config: Record<string, unknown>;
  /** Working directory for the config file; a fresh temp dir (removed on stop) by default. */
  readonly dir?: string;
  /** Extra environment variables. */
  readonly env?: Readonly<Record<string, string>>;
  /** Extra node options before the launcher, e.g. `--max-old-space-size=512`. */
  readonly nodeArgs?: readonly string[];
  /** How long to wait for the start banner (ms, default 30000: tsx compiles on first start). */
  readonly startTimeoutMs?: number;
}

/** A running daemon process. */
export interface SoakDaemon {
  readonly pid: number;
  /** `http://127.0.0.1:PORT/` as the banner printed it. */
  readonly httpUrl: string;
  /** `ws://127.0.0.1:PORT/ws` as the banner printed it. */
  readonly wsUrl: string;
  /** Directory holding `statecast.json` (the config file SIGHUP re-reads). */
  readonly dir: string;
  readonly configPath: string;
  /** Parsed log lines so far. */
  readonly logs: readonly DaemonLogLine[];
  /** Stderr lines that were not JSON (a crash trace, a warning from node). */
  readonly otherOutput: readonly string[];
  /**
   * Every warning and error since start by message (with its `err` text or `reasons` when
   * given): unlike `logs`, which keeps the latest lines only, this counts all of them.
   */
  readonly warningCounts: ReadonlyMap<string, number>;
  /** True while the process has not exited. */
  readonly running: boolean;
  /** Resolves with the exit code and signal once the process has exited. */
  readonly exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** Log lines whose message contains `text`. */
  find(text: string): DaemonLogLine[];
  /** Resolves once `count` lines whose message contains `text` were logged; rejects at the deadline or exit. */
  waitForLog(text: string, count?: number, timeoutMs?: number): Promise<DaemonLogLine[]>;
  /** GET a path of the HTTP server; never throws for a status, only for a refused connection. */
  get(path: string): Promise<{ status: number; body: string }>;
  /** Scrapes and parses /metrics. */
  metrics(): Promise<Map<string, PromFamily>>;
  /** Resolves once /readyz answers 200 (rejects at the deadline or exit). */
  waitReady(timeoutMs?: number): Promise<void>;
  /** Sends a signal (e.g. SIGHUP); false when the process is gone. */
  signal(signal: NodeJS.Signals): boolean;
  /** Rewrites the config file (for a SIGHUP reload). */
  rewriteConfig(config: Record<string, unknown>): Promise<void>;
  /** SIGTERM, SIGKILL after `deadlineMs` (default 15000); removes a temp dir. Idempotent. */
  stop(deadlineMs?: number): Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** A short tail of the output, for failure messages. */
  tail(lines?: number): string;
}

/** Every daemon started and not yet stopped, so a crashed test worker leaves none behind. */
const live = new Set<ChildProcess>();
let exitHookInstalled = false;

function installExitHook(): void {
  if (exitHookInstalled) return;
  exitHookInstalled = true;
  process.once('exit', () => {
    for (const child of live) child.kill('SIGKILL');
  });
}

/** Polls `condition` every `intervalMs` until it holds; rejects with `what` at the deadline. */
export async function waitUntil(
  condition: () => boolean | Promise<boolean>,
  what: string,
  timeoutMs = 20_000,
  intervalMs = 50,
): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    if (await condition()) return;
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, intervalMs));
  }
}

/**
 * The config with test-friendly service settings unless it says otherwise: loopback HTTP on
 * port 0, quick reconnects, a client id unique to this daemon (kept across rewrites, so a
 * reload resumes the same broker session), and checkpoints inside `dir` (the default
 * `./state` would land in the repository).
 */
function withTestDefaults(config: Record<string, unknown>, dir: string, clientId: string): Record<string, unknown> {
  const section = (name: string): Record<string, unknown> => (config[name] ?? {}) as Record<string, unknown>;
  return {
    ...config,
    http: { host: '127.0.0.1', port: 0, ...section('http') },
    broker: { reconnectMinMs: 50, reconnectMaxMs: 500, clientId, ...section('broker') },
    checkpoint: { directory: join(dir, 'state'), ...section('checkpoint') },
  };
}

/** Starts the daemon and resolves once it printed its banner (the broker may still be away). */
export async function startSoakDaemon(options: SoakDaemonOptions): Promise<SoakDaemon> {
  installExitHook();
  const ownsDir = options.dir === undefined;
  const dir = options.dir ?? (await mkdtemp(join(tmpdir(), 'statecast-daemon-')));
  const configPath = join(dir, 'statecast.json');
  const clientId = `statecast-test-${randomUUID().slice(0, 8)}`;
  await writeFile(configPath, JSON.stringify(withTestDefaults(options.config, dir, clientId), null, 2));

  const child = spawn(process.execPath, [...(options.nodeArgs ?? []), join(REPO_ROOT, 'bin/statecast.js'), 'run', '--config', configPath], {
    cwd: REPO_ROOT,
    env: { ...process.env, NO_COLOR: '1', ...options.env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  live.add(child);
  const pid = child.pid;
  if (pid === undefined) throw new Error('the daemon did not start (no pid)');

  const logs: DaemonLogLine[] = [];
  const otherOutput: string[] = [];
  const warningCounts = new Map<string, number>();
  const countWarning = (line: DaemonLogLine): void => {
    if (line.level < 40) return;
    const err = line['err'];
    const detail = err === undefined ? '' : ` (${typeof err === 'string' ? err : String((err as { message?: unknown }).message ?? JSON.stringify(err)).slice(0, 120)})`;
    const reasons = Array.isArray(line['reasons']) ? ` [${(line['reasons'] as unknown[]).join(', ')}]` : typeof line['reason'] === 'string' ? ` [${line['reason']}]` : '';
    const key = `${line.msg}${detail}${reasons}`;
    warningCounts.set(key, (warningCounts.get(key) ?? 0) + 1);
  };
  let stdout = '';
  let partial = '';
  const waiters = new Set<() => void>();
  const notify = (): void => {
    for (const w of [...waiters]) w();
  };
  child.stdout!.setEncoding('utf8').on('data', (chunk: string) => {
    stdout += chunk;
    notify();
  });
  child.stderr!.setEncoding('utf8').on('data', (chunk: string) => {
    const text = partial + chunk;
    const lines = text.split('\n');
    partial = lines.pop() ?? '';
    for (const line of lines) {
      if (line === '') continue;
      try {
        const parsed = JSON.parse(line) as DaemonLogLine;
        if (typeof parsed.msg === 'string') {
          logs.push(parsed);
          countWarning(parsed);
        } else {
          otherOutput.push(line);
        }
      } catch {
        otherOutput.push(line);
      }
    }
    // Keep the record bounded: a soak logs for minutes.
    if (logs.length > 50_000) logs.splice(0, logs.length - 40_000);
    if (otherOutput.length > 2000) otherOutput.splice(0, otherOutput.length - 1000);
    notify();
  });
  let running = true;
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((resolve) => {
    child.once('exit', (code, signal) => {
      running = false;
      live.delete(child);
      notify();
      resolve({ code, signal });
    });
  });

  const tail = (count = 30): string => {
    const lines = [...logs.slice(-count).map((l) => JSON.stringify(l)), ...otherOutput.slice(-count)];
    return `stdout:\n${stdout.slice(-2000)}\nstderr (last lines):\n${lines.join('\n')}`;
  };

  /** Resolves when `check` holds, re-checked on every output; rejects at the deadline or on exit. */
  const awaitOutput = <T>(check: () => T | undefined, what: string, timeoutMs: number): Promise<T> =>
    new Promise((resolve, reject) => {
      const timer = setTimeout(() => finish(new Error(`timed out after ${timeoutMs} ms waiting for ${what}\n${tail()}`)), timeoutMs);
      const finish = (error: Error | null, value?: T): void => {
        clearTimeout(timer);
        waiters.delete(poll);
        if (error === null) resolve(value as T);
        else reject(error);
      };
      const poll = (): void => {
        const value = check();
        if (value !== undefined) finish(null, value);
        else if (!running) finish(new Error(`the daemon exited while waiting for ${what}\n${tail()}`));
      };
      waiters.add(poll);
      poll();
    });

  try {
    await awaitOutput(() => (stdout.includes('Press Ctrl-C') ? true : undefined), 'the start banner', options.startTimeoutMs ?? 30_000);
  } catch (error) {
    child.kill('SIGKILL');
    await exited;
    if (ownsDir) await rm(dir, { recursive: true, force: true });
    throw error;
  }
  const httpUrl = /dashboard\s+(\S+)/.exec(stdout)?.[1] ?? '';
  const wsUrl = /websocket\s+(\S+)/.exec(stdout)?.[1] ?? '';

  const get = async (path: string): Promise<{ status: number; body: string }> => {
    const response = await fetch(new URL(path.replace(/^\//, ''), httpUrl), { signal: AbortSignal.timeout(20_000) });
    return { status: response.status, body: await response.text() };
  };

  let stopping: Promise<{ code: number | null; signal: NodeJS.Signals | null }> | null = null;
  const find = (text: string): DaemonLogLine[] => logs.filter((l) => l.msg.includes(text));
  return {
    pid,
    httpUrl,
    wsUrl,
    dir,
    configPath,
    logs,
    otherOutput,
    warningCounts,
    get running() {
      return running;
    },
    exited,
    find,
    waitForLog(text, count = 1, timeoutMs = 20_000) {
      return awaitOutput(() => {
        const found = find(text);
        return found.length >= count ? found : undefined;
      }, `${count} log line(s) containing "${text}"`, timeoutMs);
    },
    get,
    async metrics() {
      const { status, body } = await get('/metrics');
      if (status !== 200) throw new Error(`/metrics answered ${status}`);
      return parsePrometheusText(body);
    },
    async waitReady(timeoutMs = 20_000) {
      await waitUntil(async () => {
        if (!running) throw new Error(`the daemon exited before it was ready\n${tail()}`);
        return (await get('/readyz').catch(() => ({ status: 0 }))).status === 200;
      }, 'GET /readyz to answer 200', timeoutMs);
    },
    signal(signal) {
      return running && child.kill(signal);
    },
    async rewriteConfig(config) {
      await writeFile(configPath, JSON.stringify(withTestDefaults(config, dir, clientId), null, 2));
    },
    stop(deadlineMs = 15_000) {
      stopping ??= (async () => {
        if (running) child.kill('SIGTERM');
        const timer = setTimeout(() => child.kill('SIGKILL'), deadlineMs);
        const result = await exited;
        clearTimeout(timer);
        if (ownsDir) await rm(dir, { recursive: true, force: true });
        return result;
      })();
      return stopping;
    },
    tail,
  };
}

/** Sum of every sample of a counter (or gauge) whose labels include `labels`. */
export function metricSum(families: Map<string, PromFamily>, name: string, labels: Record<string, string> = {}): number {
  const family = families.get(name);
  if (family === undefined) return 0;
  let sum = 0;
  for (const s of family.samples) {
    if (s.name !== name) continue;
    if (Object.entries(labels).every(([k, v]) => s.labels[k] === v)) sum += s.value;
  }
  return sum;
}
