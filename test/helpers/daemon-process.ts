/**
 * The real daemon as a child process (`node bin/statecast.js run --config FILE`) for
 * integration tests: a generated YAML config in a temp dir (free HTTP port, the test broker's
 * URL or the embedded broker on a free port, checkpoints in the temp dir, `log.level: info`),
 * start-up awaited through /readyz with bounded polling, stdout and the JSON log lines on stderr
 * collected for assertions, and every process killed and every temp dir removed by
 * `cleanupDaemons()` (call it in afterAll) or, failing that, when the test worker exits.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { request } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { stringify } from 'yaml';
import type { Config } from '../../src/config/config-schema.js';
import type { DeepReadonly } from '../../src/config/deep-freeze.js';
import { formatConfigIssues } from '../../src/config/config-error.js';
import { loadConfig } from '../../src/config/load-config.js';
import { freePort } from './free-port.js';
import { startMosquitto, type MosquittoOptions, type TestMosquitto } from './mosquitto.js';
import { parsePrometheusText, type PromFamily } from './prometheus-text.js';

const BIN = fileURLToPath(new URL('../../bin/statecast.js', import.meta.url));
const REPO_ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** Upper bound for a daemon to print its URLs and answer /readyz (tsx compiles on a busy 2-core CI box). */
export const DAEMON_START_TIMEOUT_MS = 45_000;
const POLL_INTERVAL_MS = 50;
const HTTP_TIMEOUT_MS = 5_000;

/** One pino line from the daemon's stderr. */
export interface DaemonLogLine {
  readonly level: number;
  readonly msg: string;
  readonly [field: string]: unknown;
}

/** How the process ended. */
export interface DaemonExit {
  readonly code: number | null;
  readonly signal: NodeJS.Signals | null;
}

/** What to start. */
export interface DaemonSpec {
  /**
   * Config sections written over the generated ones (objects merge key by key, anything else
   * replaces); must hold `estimators`.
   */
  readonly config: Record<string, unknown>;
  /** The broker to use; absent: the daemon's embedded broker on a free port (MQTT 3.1.1). */
  readonly brokerUrl?: string;
  /** Resolve once /readyz answers 200 (default), or as soon as /healthz does. */
  readonly waitFor?: 'ready' | 'alive';
}

/** A running (or ended) daemon process. */
export interface DaemonProcess {
  readonly pid: number;
  /** Temp dir holding the config file and `state/` (the checkpoint directory). */
  readonly dir: string;
  readonly configPath: string;
  /** The config as the daemon loaded it at start. */
  readonly config: DeepReadonly<Config>;
  readonly checkpointPath: string;
  /** `http://127.0.0.1:PORT/` */
  readonly httpUrl: string;
  readonly wsUrl: string;
  readonly httpPort: number;
  /** The broker the daemon uses (its embedded one when no URL was given). */
  readonly brokerUrl: string;
  /** The protocol test clients should speak to that broker: 4 for the embedded broker. */
  readonly protocolVersion: 4 | 5;
  readonly embeddedBroker: boolean;
  /** Parsed log lines so far (stderr), in order. */
  readonly logs: readonly DaemonLogLine[];
  stdout(): string;
  stderr(): string;
  /** The first log line at index ≥ `after` whose msg includes `text` (or that `text` accepts). */
  waitForLog(text: string | ((line: DaemonLogLine) => boolean), options?: { after?: number; timeoutMs?: number }): Promise<DaemonLogLine>;
  get(path: string): Promise<{ status: number; body: string }>;
  getJson<T>(path: string): Promise<{ status: number; body: T }>;
  /** GET /metrics parsed (strictly) as Prometheus text. */
  metrics(): Promise<Map<string, PromFamily>>;
  /** Polls GET `path` until it answers `status`, for at most `timeoutMs`. */
  waitForStatus(path: string, status: number, timeoutMs?: number): Promise<void>;
  /** Resident set size from /proc/PID/status, in bytes. */
  rssBytes(): number;
  signal(signal: NodeJS.Signals): void;
  readonly exited: Promise<DaemonExit>;
  /** Sends `signal` and awaits the exit; SIGKILLs and throws when it takes longer than `timeoutMs`. */
  stop(signal?: NodeJS.Signals, timeoutMs?: number): Promise<DaemonExit>;
  /** SIGKILL, then awaits the exit. */
  kill(): Promise<DaemonExit>;
  /** Rewrites the config file from the generated sections and new `config` sections (for SIGHUP). */
  writeConfig(config: Record<string, unknown>): Promise<void>;
  /** Rewrites the config file with raw text (e.g. an invalid config, for SIGHUP). */
  writeConfigText(text: string): Promise<void>;
  /** Starts a new process with the same config file and directory (after this one ended). */
  restart(options?: { waitFor?: 'ready' | 'alive' }): Promise<DaemonProcess>;
}

interface Launch {
  readonly dir: string;
  readonly configPath: string;
  readonly generated: Record<string, unknown>;
  readonly brokerUrl: string | undefined;
}

const liveChildren = new Set<ChildProcess>();
const tempDirs = new Set<string>();
let exitHookInstalled = false;

/** Starts Mosquitto for a daemon test, or returns null with a notice that the daemon's embedded broker stands in. */
export async function startBrokerForDaemon(options: MosquittoOptions = {}): Promise<TestMosquitto | null> {
  const mosquitto = await startMosquitto(options);
  if (mosquitto === null) console.warn('mosquitto is not installed: the daemon runs its embedded broker (MQTT 3.1.1) instead');
  return mosquitto;
}

/** Writes the config, spawns the daemon and resolves once it is ready (or alive); see the module comment. */
export async function startDaemon(spec: DaemonSpec): Promise<DaemonProcess> {
  const dir = await mkdtemp(join(tmpdir(), 'statecast-daemon-'));
  tempDirs.add(dir);
  const httpPort = await freePort();
  const generated: Record<string, unknown> = {
    http: { host: '127.0.0.1', port: httpPort },
    broker: {
      ...(spec.brokerUrl === undefined ? {} : { url: spec.brokerUrl }),
      clientId: `statecast-it-${process.pid}-${Math.random().toString(16).slice(2, 10)}`,
      reconnectMinMs: 50,
      reconnectMaxMs: 500,
    },
    ...(spec.brokerUrl === undefined ? { embeddedBroker: { host: '127.0.0.1', port: await freePort() } } : {}),
    checkpoint: { directory: join(dir, 'state'), intervalS: 3600 },
    log: { level: 'info' },
    simulator: { enabled: false },
  };
  const launch: Launch = { dir, configPath: join(dir, 'statecast.yaml'), generated, brokerUrl: spec.brokerUrl };
  await writeFile(launch.configPath, configText(generated, spec.config));
  return spawnDaemon(launch, spec.waitFor ?? 'ready');
}

/** Kills every daemon this worker started and removes their temp dirs. Call in afterAll. */
export async function cleanupDaemons(): Promise<void> {
  await Promise.all([...liveChildren].map((child) => killAndWait(child)));
  await Promise.all([...tempDirs].map((dir) => rm(dir, { recursive: true, force: true })));
  tempDirs.clear();
}

/** Merges `over` into `base`: plain objects key by key, anything else replaced. */
export function mergeConfig(base: Record<string, unknown>, over: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = { ...base };
  for (const [key, value] of Object.entries(over)) {
    const prior = out[key];
    out[key] = isPlainObject(prior) && isPlainObject(value) ? mergeConfig(prior, value) : value;
  }
  return out;
}

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function configText(generated: Record<string, unknown>, config: Record<string, unknown>): string {
  return `# generated by test/helpers/daemon-process.ts\n${stringify(mergeConfig(generated, config))}`;
}

function childEnv(): NodeJS.ProcessEnv {
  // STATECAST_* variables override the file; a developer's shell must not change what a test runs.
  const env: NodeJS.ProcessEnv = {};
  for (const [k, v] of Object.entries(process.env)) if (!k.startsWith('STATECAST_')) env[k] = v;
  env['NO_COLOR'] = '1';
  return env;
}

function killAndWait(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => {
    child.once('exit', () => resolve());
    child.kill('SIGKILL');
  });
}

function installExitHook(): void {
  if (exitHookInstalled) return;
  exitHookInstalled = true;
  // A worker that dies without afterAll must not leave daemons behind.
  process.once('exit', () => {
    for (const child of liveChildren) child.kill('SIGKILL');
  });
}

/** Rejects after `ms` with `what` unless `promise` settles first; the timer never outlives it. */
export function within<T>(promise: Promise<T>, ms: number, what: () => string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`timed out after ${ms} ms: ${what()}`)), ms);
  });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}

/**
 * One GET on a fresh connection (no keep-alive pool, so a request never lands on a socket the
 * server is closing as idle), bounded by HTTP_TIMEOUT_MS.
 */
function httpGet(url: URL): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request(url, { agent: false, timeout: HTTP_TIMEOUT_MS }, (res) => {
      let body = '';
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => (body += chunk));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }));
      res.on('error', reject);
    });
    req.on('timeout', () => req.destroy(new Error(`GET ${url.pathname} took longer than ${HTTP_TIMEOUT_MS} ms`)));
    req.on('error', reject);
    req.end();
  });
}

async function spawnDaemon(launch: Launch, waitFor: 'ready' | 'alive'): Promise<DaemonProcess> {
  const loaded = loadConfig(launch.configPath, {});
  if (!loaded.ok) throw new Error(`the generated config is invalid:\n${formatConfigIssues(loaded.issues)}`);
  const config = loaded.config;
  installExitHook();
  const child = spawn(process.execPath, [BIN, 'run', '--config', launch.configPath], {
    cwd: REPO_ROOT,
    env: childEnv(),
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  liveChildren.add(child);
  let exitStatus: DaemonExit | null = null;
  const exited = new Promise<DaemonExit>((resolve) => {
    child.once('exit', (code, signal) => {
      liveChildren.delete(child);
      exitStatus = { code, signal };
      resolve(exitStatus);
    });
  });
  let stdout = '';
  let stderr = '';
  let partial = '';
  const logs: DaemonLogLine[] = [];
  const waiters = new Set<() => void>();
  const notify = (): void => {
    for (const w of [...waiters]) w();
  };
  child.stdout!.setEncoding('utf8').on('data', (chunk: string) => {
    stdout += chunk;
    notify();
  });
  child.stderr!.setEncoding('utf8').on('data', (chunk: string) => {
    stderr += chunk;
    const lines = (partial + chunk).split('\n');
    partial = lines.pop() ?? '';
    for (const line of lines) {
      if (!line.startsWith('{')) continue;
      try {
        logs.push(JSON.parse(line) as DaemonLogLine);
      } catch {
        // not a log line; it stays in the raw stderr
      }
    }
    notify();
  });
  void exited.then(notify);
  const describeState = (): string => `daemon pid ${child.pid}, exit ${JSON.stringify(exitStatus)}\nstdout:\n${stdout}\nstderr (tail):\n${stderr.slice(-4000)}`;

  /** Resolves with check()'s first non-undefined result, re-checked on output and exit. */
  const until = <T>(check: () => T | undefined, timeoutMs: number, what: string): Promise<T> => {
    let waiter: (() => void) | undefined;
    const found = new Promise<T>((resolve, reject) => {
      waiter = () => {
        const value = check();
        if (value !== undefined) resolve(value);
        else if (exitStatus !== null) reject(new Error(`the daemon exited while waiting for ${what}\n${describeState()}`));
      };
      waiters.add(waiter);
      waiter();
    });
    return within(found, timeoutMs, () => `${what}\n${describeState()}`).finally(() => waiters.delete(waiter!));
  };

  const urlMatch = await until(() => /dashboard\s+(http:\/\/\S+)/.exec(stdout) ?? undefined, DAEMON_START_TIMEOUT_MS, 'the dashboard URL on stdout');
  const httpUrl = urlMatch[1]!;
  const embeddedMatch = /broker\s+(\S+) \(embedded/.exec(stdout);
  const brokerUrl = launch.brokerUrl ?? embeddedMatch?.[1];
  if (brokerUrl === undefined) throw new Error(`no broker URL on stdout\n${describeState()}`);

  const get = (path: string): Promise<{ status: number; body: string }> => httpGet(new URL(path.replace(/^\//, ''), httpUrl));
  const waitForStatus = async (path: string, status: number, timeoutMs = DAEMON_START_TIMEOUT_MS): Promise<void> => {
    const deadline = Date.now() + timeoutMs;
    let last = 'no answer';
    for (;;) {
      if (exitStatus !== null) throw new Error(`the daemon exited while polling ${path}\n${describeState()}`);
      try {
        const res = await get(path);
        if (res.status === status) return;
        last = `${res.status} ${res.body}`;
      } catch (err) {
        last = (err as Error).message;
      }
      if (Date.now() >= deadline) throw new Error(`GET ${path} did not answer ${status} within ${timeoutMs} ms (last: ${last})\n${describeState()}`);
      await new Promise((resolve) => setTimeout(resolve, POLL_INTERVAL_MS));
    }
  };
  const stopWith = async (signal: NodeJS.Signals, timeoutMs: number): Promise<DaemonExit> => {
    if (exitStatus === null) child.kill(signal);
    try {
      return await within(exited, timeoutMs, () => `the daemon to exit after ${signal}\n${describeState()}`);
    } catch (err) {
      await killAndWait(child);
      throw err;
    }
  };

  const daemon: DaemonProcess = {
    pid: child.pid!,
    dir: launch.dir,
    configPath: launch.configPath,
    config,
    checkpointPath: join(config.checkpoint.directory, 'tracks.checkpoint.json'),
    httpUrl,
    wsUrl: httpUrl.replace(/^http/, 'ws') + config.http.websocket.path.replace(/^\//, ''),
    httpPort: config.http.port,
    brokerUrl,
    protocolVersion: launch.brokerUrl === undefined ? 4 : config.broker.protocolVersion,
    embeddedBroker: launch.brokerUrl === undefined,
    logs,
    stdout: () => stdout,
    stderr: () => stderr,
    waitForLog(text, options = {}) {
      const after = options.after ?? 0;
      const accepts = typeof text === 'string' ? (l: DaemonLogLine) => typeof l.msg === 'string' && l.msg.includes(text) : text;
      return until(() => logs.slice(after).find(accepts), options.timeoutMs ?? 15_000, `a log line ${String(text)}`);
    },
    get,
    async getJson<T>(path: string) {
      const res = await get(path);
      return { status: res.status, body: JSON.parse(res.body) as T };
    },
    async metrics() {
      const res = await get('/metrics');
      if (res.status !== 200) throw new Error(`GET /metrics answered ${res.status}`);
      return parsePrometheusText(res.body, { requirePrefix: 'statecast_' });
    },
    waitForStatus,
    rssBytes() {
      const status = readFileSync(`/proc/${child.pid}/status`, 'utf8');
      const m = /^VmRSS:\s+(\d+)\s+kB$/m.exec(status);
      if (m === null) throw new Error(`no VmRSS in /proc/${child.pid}/status`);
      return Number(m[1]) * 1024;
    },
    signal(signal) {
      child.kill(signal);
    },
    exited,
    stop: (signal = 'SIGTERM', timeoutMs = 20_000) => stopWith(signal, timeoutMs),
    kill: () => stopWith('SIGKILL', 10_000),
    writeConfig: (sections) => writeFile(launch.configPath, configText(launch.generated, sections)),
    writeConfigText: (text) => writeFile(launch.configPath, text),
    async restart(options = {}) {
      if (exitStatus === null) throw new Error('restart() needs the previous process to have ended');
      return spawnDaemon(launch, options.waitFor ?? 'ready');
    },
  };
  try {
    await waitForStatus(waitFor === 'ready' ? '/readyz' : '/healthz', 200);
  } catch (err) {
    await killAndWait(child);
    throw err;
  }
  return daemon;
}
