import { spawn, type ChildProcess } from 'node:child_process';
import { accessSync, constants } from 'node:fs';
import { chown, mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { connect } from 'node:net';
import { tmpdir } from 'node:os';
import { delimiter, join } from 'node:path';
import { freePort } from './free-port.js';

/** How to start a test Mosquitto. */
export interface MosquittoOptions {
  /** Port on 127.0.0.1; a free one by default. */
  readonly port?: number;
  /** Keep sessions and queued messages on disk across a restart (written on a graceful stop). */
  readonly persistence?: boolean;
  /** Working directory (config, pid, log, database); a fresh temp dir, removed on stop, by default. */
  readonly dir?: string;
}

/** A Mosquitto child process owned by one test file. */
export interface TestMosquitto {
  readonly url: string;
  readonly port: number;
  /** Working directory holding `mosquitto.conf`, `mosquitto.log` and the database. */
  readonly dir: string;
  /** Ends the broker (SIGTERM, so a persistent database is saved) and removes a temp dir. Idempotent. */
  stop(): Promise<void>;
  /** Sends `signal` and resolves once the process has exited. */
  kill(signal: NodeJS.Signals): Promise<void>;
  /** Starts the broker again on the same port and directory (stopping a running one first). */
  restart(): Promise<void>;
  /** The broker's log so far, for failure messages. */
  log(): Promise<string>;
}

const READY_ATTEMPTS = 100;
const READY_RETRY_MS = 50;

/** The mosquitto binary, or null when it is not installed. */
export function mosquittoBinary(): string | null {
  const dirs = ['/usr/sbin', ...(process.env['PATH'] ?? '').split(delimiter).filter((d) => d !== '')];
  for (const dir of dirs) {
    const candidate = join(dir, 'mosquitto');
    try {
      accessSync(candidate, constants.X_OK);
      return candidate;
    } catch {
      // not here; try the next directory
    }
  }
  return null;
}

/**
 * The broker config used in tests. The queue limits matter: Mosquitto's default
 * `max_queued_messages 1000` silently drops messages (even QoS 1) for a subscriber that falls
 * more than 1000 behind, and `max_inflight_messages 20` throttles QoS 1 delivery; tests that
 * count every sequence number would then fail for the broker's reasons, not ours.
 */
export function mosquittoConfig(port: number, dir: string, persistence: boolean): string {
  const lines = [
    `listener ${port} 127.0.0.1`,
    'allow_anonymous true',
    'max_queued_messages 1000000',
    'max_queued_bytes 0',
    'max_inflight_messages 0',
    'set_tcp_nodelay true',
    `pid_file ${join(dir, 'mosquitto.pid')}`,
    `log_dest file ${join(dir, 'mosquitto.log')}`,
    'log_type error',
    'log_type warning',
    'log_type notice',
    'log_type information',
    `persistence ${persistence ? 'true' : 'false'}`,
  ];
  if (persistence) lines.push(`persistence_location ${join(dir, 'data')}/`);
  return `${lines.join('\n')}\n`;
}

/**
 * Starts Mosquitto as a child process (not daemonised, so the test holds its pid) and resolves
 * once its port accepts connections. Returns null when no mosquitto binary is installed, so a
 * test can fall back to the embedded broker or skip.
 */
export async function startMosquitto(options: MosquittoOptions = {}): Promise<TestMosquitto | null> {
  const binary = mosquittoBinary();
  if (binary === null) return null;
  const port = options.port ?? (await freePort());
  const ownsDir = options.dir === undefined;
  const dir = options.dir ?? (await mkdtemp(join(tmpdir(), 'statecast-mosquitto-')));
  const persistence = options.persistence ?? false;
  if (persistence) await mkdir(join(dir, 'data'), { recursive: true });
  const configFile = join(dir, 'mosquitto.conf');
  await writeFile(configFile, mosquittoConfig(port, dir, persistence));
  await giveToMosquittoUser(dir, persistence);

  let child: ChildProcess | undefined;
  let exited: Promise<void> = Promise.resolve();
  let stopped = false;
  // If the test worker dies without afterAll, do not leave a broker behind.
  const killOnExit = (): void => void child?.kill('SIGKILL');
  process.once('exit', killOnExit);

  const readLog = (): Promise<string> => readFile(join(dir, 'mosquitto.log'), 'utf8').catch(() => '');
  const spawnBroker = async (): Promise<void> => {
    const proc = spawn(binary, ['-c', configFile], { stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    proc.stderr?.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
    child = proc;
    let hasExited = false;
    exited = new Promise((resolve) => proc.once('exit', () => ((hasExited = true), resolve())));
    for (let attempt = 0; attempt < READY_ATTEMPTS; attempt += 1) {
      if (hasExited) break;
      if (await accepts(port)) return;
      await new Promise((resolve) => setTimeout(resolve, READY_RETRY_MS));
    }
    proc.kill('SIGKILL');
    await exited;
    throw new Error(`mosquitto did not accept connections on 127.0.0.1:${port}\n${stderr}${await readLog()}`);
  };
  const kill = async (signal: NodeJS.Signals): Promise<void> => {
    const proc = child;
    if (proc !== undefined && proc.exitCode === null && proc.signalCode === null) proc.kill(signal);
    await exited;
  };

  await spawnBroker();
  return {
    url: `mqtt://127.0.0.1:${port}`,
    port,
    dir,
    kill,
    log: readLog,
    async restart() {
      await kill('SIGTERM');
      await spawnBroker();
    },
    async stop() {
      if (stopped) return;
      stopped = true;
      await kill('SIGTERM');
      process.off('exit', killOnExit);
      if (ownsDir) await rm(dir, { recursive: true, force: true });
    },
  };
}

/** True when a TCP connection to 127.0.0.1:port succeeds. */
function accepts(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = connect({ host: '127.0.0.1', port });
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
  });
}

/**
 * Started as root, Mosquitto switches to user `mosquitto` before writing its pid, log and
 * database, and exits with "Unable to write pid file" unless that user owns the directory.
 */
async function giveToMosquittoUser(dir: string, persistence: boolean): Promise<void> {
  if (process.getuid?.() !== 0) return;
  const passwd = await readFile('/etc/passwd', 'utf8').catch(() => '');
  const entry = passwd.split('\n').find((line) => line.startsWith('mosquitto:'));
  const [, , uid, gid] = entry?.split(':') ?? [];
  if (uid === undefined || gid === undefined) return;
  await chown(dir, Number(uid), Number(gid));
  if (persistence) await chown(join(dir, 'data'), Number(uid), Number(gid));
}
