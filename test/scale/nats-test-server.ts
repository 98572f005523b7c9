/**
 * A nats-server child process for one test file: loopback only, free ports for NATS and MQTT,
 * JetStream on a temporary file store, the partition mappings from the test's configuration.
 * Always stop it (afterAll); a worker that dies kills it on exit.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { accessSync, constants, rmSync } from 'node:fs';
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { connect as tcpConnect } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { freePort } from '../helpers/free-port.js';

/** The Debian package's binary. */
export const NATS_SERVER_BINARY = '/usr/sbin/nats-server';

/** A running test server. */
export interface NatsTestServer {
  readonly url: string;
  readonly mqttUrl: string;
  readonly dir: string;
  readonly pid: () => number | undefined;
  /** SIGTERM (a clean shutdown), then removes the temp dir. Idempotent. */
  stop(): Promise<void>;
  /** Stops the server (SIGTERM) and starts it again on the same ports and file store. */
  restart(): Promise<void>;
  /** Stops the server and keeps the store, for a later `start()`. */
  halt(): Promise<void>;
  /** Starts a halted server again. */
  start(): Promise<void>;
  log(): string;
}

function accepts(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = tcpConnect({ host: '127.0.0.1', port });
    socket.once('connect', () => (socket.destroy(), resolve(true)));
    socket.once('error', () => resolve(false));
  });
}

/** Starts nats-server with `mappingsBlock` (nats-server config syntax) added to its config. */
export function startNatsServer(mappingsBlock: string): Promise<NatsTestServer> {
  return startNatsServerWith((ports) => [`server_name: statecast-test-${ports.port}`, `mqtt { listen: "127.0.0.1:${ports.mqttPort}" }`, mappingsBlock].join('\n'));
}

/** The loopback ports and store a test server gets. */
export interface TestServerPorts {
  readonly port: number;
  readonly mqttPort: number;
  readonly httpPort: number;
  /** The JetStream store directory (inside the server's temp dir). */
  readonly storeDir: string;
}

/**
 * Starts nats-server with the config text `configOf` writes for the given ports. The client port
 * is also passed on the command line (which overrides the file), and so are JetStream and its
 * store unless `jetStreamInConfig` (nats-server refuses both). `env` is added to the server's
 * environment (for `$VAR` references in the config).
 */
export async function startNatsServerWith(
  configOf: (ports: TestServerPorts) => string,
  env: Record<string, string> = {},
  jetStreamInConfig = false,
): Promise<NatsTestServer> {
  accessSync(NATS_SERVER_BINARY, constants.X_OK); // install with: apt-get install -y nats-server
  const dir = await mkdtemp(join(tmpdir(), 'statecast-nats-'));
  const ports: TestServerPorts = { port: await freePort(), mqttPort: await freePort(), httpPort: await freePort(), storeDir: join(dir, 'js') };
  const { port, mqttPort } = ports;
  const configFile = join(dir, 'nats.conf');
  await writeFile(configFile, configOf(ports));
  let child: ChildProcess | null = null;
  let exited: Promise<void> = Promise.resolve();
  let output = '';
  let removed = false;
  // If the test process ends without afterAll, take the server and its store with it.
  const killOnExit = (): void => {
    child?.kill('SIGKILL');
    rmSync(dir, { recursive: true, force: true });
  };
  process.once('exit', killOnExit);

  const start = async (): Promise<void> => {
    const args = ['-c', configFile, '-a', '127.0.0.1', '-p', String(port), ...(jetStreamInConfig ? [] : ['-js', '-sd', ports.storeDir])];
    const proc = spawn(NATS_SERVER_BINARY, args, {
      stdio: ['ignore', 'pipe', 'pipe'],
      env: { ...process.env, ...env },
    });
    child = proc;
    let gone = false;
    exited = new Promise((resolve) => proc.once('exit', () => ((gone = true), resolve())));
    const keep = (chunk: Buffer): void => void (output = (output + chunk.toString()).slice(-20_000));
    proc.stdout?.on('data', keep);
    proc.stderr?.on('data', keep);
    for (let attempt = 0; attempt < 200 && !gone; attempt++) {
      if ((await accepts(port)) && (await accepts(mqttPort))) return;
      await new Promise((resolve) => setTimeout(resolve, 25));
    }
    proc.kill('SIGKILL');
    await exited;
    throw new Error(`nats-server did not listen on ${port}/${mqttPort}:\n${output}`);
  };
  const halt = async (): Promise<void> => {
    const proc = child;
    if (proc !== null && proc.exitCode === null && proc.signalCode === null) {
      proc.kill('SIGTERM');
      const timer = setTimeout(() => proc.kill('SIGKILL'), 10_000);
      await exited;
      clearTimeout(timer);
    }
    child = null;
  };
  await start();
  return {
    url: `nats://127.0.0.1:${port}`,
    mqttUrl: `mqtt://127.0.0.1:${mqttPort}`,
    dir,
    pid: () => child?.pid,
    start,
    halt,
    async restart() {
      await halt();
      await start();
    },
    async stop() {
      await halt();
      process.removeListener('exit', killOnExit);
      if (!removed) {
        removed = true;
        await rm(dir, { recursive: true, force: true });
      }
    },
    log: () => output,
  };
}
