/**
 * The parent side of replica-child.ts: spawns a replica process and collects its reports.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import type { ChildOptions, ChildReport } from './replica-child.js';
import { until } from './scale-fixtures.js';

const CHILD = fileURLToPath(new URL('./replica-child.ts', import.meta.url));

/** A replica process and what it reported. */
export interface ChildReplica {
  readonly proc: ChildProcess;
  readonly reports: ChildReport[];
  readonly handled: { partition: number; seq: number }[];
  /** When (Date.now) the first report of each type arrived. */
  readonly firstAtMs: Map<ChildReport['type'], number>;
  ready(): boolean;
  /** The yard tracks' states, asked for now. */
  states(): Promise<Map<string, { x: number[]; P: number[] }>>;
  stats(): Promise<Extract<ChildReport, { type: 'stats' }>>;
  /** Graceful stop (final snapshots), then waits for exit. Idempotent. */
  stop(): Promise<void>;
  /** Sends a signal and waits for exit. */
  kill(signal: NodeJS.Signals): Promise<void>;
}

/** Spawns a replica with the given options. */
export function spawnReplica(options: ChildOptions): ChildReplica {
  const proc = spawn(process.execPath, ['--import', 'tsx', CHILD, JSON.stringify(options)], { stdio: ['ignore', 'inherit', 'inherit', 'ipc'] });
  const reports: ChildReport[] = [];
  const handled: { partition: number; seq: number }[] = [];
  let ready = false;
  let exited = false;
  const exit = new Promise<void>((resolve) => proc.once('exit', () => ((exited = true), resolve())));
  const killOnExit = (): void => void proc.kill('SIGKILL');
  process.once('exit', killOnExit);
  void exit.then(() => process.removeListener('exit', killOnExit));
  const firstAtMs = new Map<ChildReport['type'], number>();
  proc.on('message', (r: ChildReport) => {
    if (!firstAtMs.has(r.type)) firstAtMs.set(r.type, Date.now());
    if (r.type === 'handled') handled.push({ partition: r.partition, seq: r.seq });
    else reports.push(r);
    if (r.type === 'ready') ready = r.ready;
  });
  const ask = async <T extends ChildReport['type']>(type: T): Promise<Extract<ChildReport, { type: T }>> => {
    const before = reports.filter((r) => r.type === type).length;
    proc.send({ type });
    await until(() => reports.filter((r) => r.type === type).length > before || exited, `the replica's ${type} report`);
    const last = reports.filter((r) => r.type === type).at(-1);
    if (last === undefined || reports.filter((r) => r.type === type).length === before) throw new Error(`the replica exited before its ${type} report`);
    return last as Extract<ChildReport, { type: T }>;
  };
  return {
    proc,
    reports,
    handled,
    firstAtMs,
    ready: () => ready && !exited,
    async states() {
      return new Map((await ask('states')).states);
    },
    stats: () => ask('stats'),
    async stop() {
      if (exited) return;
      proc.send({ type: 'stop' });
      const timer = setTimeout(() => proc.kill('SIGKILL'), 20_000);
      await exit;
      clearTimeout(timer);
    },
    async kill(signal) {
      if (!exited) proc.kill(signal);
      await exit;
    },
  };
}
