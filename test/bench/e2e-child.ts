/**
 * Child processes for the e2e bench (the relay, the daemon): spawned with this Node, their
 * output kept for error messages, their CPU time read from /proc, and always stopped.
 */
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';

/** A running child process. */
export interface BenchChild {
  readonly name: string;
  readonly pid: number;
  /** Resolves when the process has exited. */
  readonly exited: Promise<void>;
  /** User + system CPU seconds used so far (from /proc/<pid>/stat). */
  cpuS(): number;
  /** stdout and stderr so far. */
  output(): string;
  /** Resolves once `text` appears on stdout or stderr; rejects on exit or after `timeoutMs`. */
  waitForOutput(text: string, timeoutMs: number): Promise<void>;
  /** SIGTERM, then SIGKILL after `graceMs`; resolves once exited. Idempotent. */
  stop(graceMs?: number): Promise<void>;
}

const CLOCK_TICKS_PER_S = clockTicksPerS();

function clockTicksPerS(): number {
  try {
    const ticks = Number(execFileSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).trim());
    return Number.isFinite(ticks) && ticks > 0 ? ticks : 100;
  } catch {
    return 100;
  }
}

/** utime + stime of `pid` in seconds; NaN once the process is gone. */
export function processCpuS(pid: number): number {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    // Fields after the parenthesised command name: state is field 3, utime 14, stime 15.
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(fields[11]) + Number(fields[12])) / CLOCK_TICKS_PER_S;
  } catch {
    return Number.NaN;
  }
}

/** Spawns `node ...args` in `cwd`. The child is killed if this process exits first. */
export function spawnNodeChild(name: string, args: readonly string[], cwd: string): BenchChild {
  const child: ChildProcess = spawn(process.execPath, args, { cwd, stdio: ['ignore', 'pipe', 'pipe'] });
  if (child.pid === undefined) throw new Error(`${name}: spawn failed`);
  const pid = child.pid;
  let output = '';
  let hasExited = false;
  const watchers = new Set<() => void>();
  const onData = (chunk: Buffer): void => {
    output += chunk.toString();
    if (output.length > 1 << 20) output = output.slice(-(1 << 19));
    for (const w of watchers) w();
  };
  child.stdout?.on('data', onData);
  child.stderr?.on('data', onData);
  const exited = new Promise<void>((resolve) => child.once('exit', () => {
    hasExited = true;
    for (const w of watchers) w();
    resolve();
  }));
  const killOnExit = (): void => void child.kill('SIGKILL');
  process.once('exit', killOnExit);
  let stopping: Promise<void> | undefined;
  return {
    name,
    pid,
    exited,
    cpuS: () => processCpuS(pid),
    output: () => output,
    waitForOutput(text, timeoutMs) {
      return new Promise((resolve, reject) => {
        const timer = setTimeout(() => finish(new Error(`${name}: no "${text}" within ${timeoutMs} ms\n${output}`)), timeoutMs);
        const check = (): void => {
          if (output.includes(text)) finish();
          else if (hasExited) finish(new Error(`${name} exited before "${text}"\n${output}`));
        };
        const finish = (err?: Error): void => {
          clearTimeout(timer);
          watchers.delete(check);
          if (err === undefined) resolve();
          else reject(err);
        };
        watchers.add(check);
        check();
      });
    },
    stop(graceMs = 5000) {
      stopping ??= (async () => {
        if (!hasExited) child.kill('SIGTERM');
        const timer = setTimeout(() => child.kill('SIGKILL'), graceMs);
        await exited;
        clearTimeout(timer);
        process.off('exit', killOnExit);
      })();
      return stopping;
    },
  };
}
