/**
 * What the soak reads from the daemon: its resident memory from /proc, and from one /metrics
 * scrape the event-loop lag and the measurement counters. With 10,000 tracks the exposition
 * runs to megabytes of per-entity gauges, so only the few families needed are cut out of the
 * text (a full parse would cost the harness more than the figures are worth).
 */
import { readFile } from 'node:fs/promises';

/** Linux clock ticks per second in /proc/<pid>/stat (USER_HZ, 100 on every common kernel). */
const CLOCK_TICKS_PER_S = 100;

/** Resident set size (VmRSS, MiB) and CPU time used so far (user + system, s) of a process; NaN once it is gone. */
export async function processFigures(pid: number): Promise<{ rssMiB: number; cpuS: number }> {
  try {
    const [status, stat] = await Promise.all([readFile(`/proc/${pid}/status`, 'utf8'), readFile(`/proc/${pid}/stat`, 'utf8')]);
    const kb = /^VmRSS:\s+(\d+)\s+kB$/m.exec(status)?.[1];
    // Fields after the parenthesised command name: state is field 3, utime 14 and stime 15.
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    const cpuS = (Number(fields[11]) + Number(fields[12])) / CLOCK_TICKS_PER_S;
    return { rssMiB: kb === undefined ? Number.NaN : Number(kb) / 1024, cpuS };
  } catch {
    return { rssMiB: Number.NaN, cpuS: Number.NaN };
  }
}

/** The figures of one scrape. */
export interface MetricsProbe {
  /** Event-loop delay since the previous scrape (ms) by quantile "0.5", "0.99", "1". */
  readonly lagMs: Readonly<Record<string, number>>;
  readonly received: number;
  readonly accepted: number;
  readonly rejected: number;
  readonly rejectedByReason: Readonly<Record<string, number>>;
  readonly estimatesPublished: number;
  /**
   * `statecast_mqtt_dropped_total`: outgoing messages (estimates and health, all estimators)
   * the daemon's bounded publish queue dropped; NaN when the daemon does not export it.
   */
  readonly mqttDropped: number;
  /** How long the scrape took (request to last byte) and its size. */
  readonly scrapeMs: number;
  readonly scrapeBytes: number;
}

/** The sample lines of one family (`# TYPE name …` up to the next `#` line). */
function familyLines(text: string, name: string): string[] {
  const start = text.indexOf(`# TYPE ${name} `);
  if (start < 0) return [];
  const bodyStart = text.indexOf('\n', start) + 1;
  let end = text.indexOf('\n#', bodyStart);
  if (end < 0) end = text.length;
  return text.slice(bodyStart, end).split('\n').filter((l) => l.startsWith(name));
}

function sampleValue(line: string): number {
  return Number(line.slice(line.lastIndexOf(' ') + 1));
}

function label(line: string, key: string): string | undefined {
  return new RegExp(`[{,]${key}="([^"]*)"`).exec(line)?.[1];
}

/** Sum of a counter's samples for one estimator. */
function counter(text: string, name: string, estimator: string): { total: number; lines: string[] } {
  const lines = familyLines(text, name).filter((l) => label(l, 'estimator') === estimator);
  return { total: lines.reduce((s, l) => s + sampleValue(l), 0), lines };
}

/** The value of a family without labels, NaN when absent. */
function unlabelledValue(text: string, name: string): number {
  const line = familyLines(text, name).find((l) => l.startsWith(`${name} `));
  return line === undefined ? Number.NaN : sampleValue(line);
}

/** Scrapes `${httpUrl}metrics` and cuts out the soak's figures for `estimator`. */
export async function probeMetrics(httpUrl: string, estimator: string): Promise<MetricsProbe> {
  const started = performance.now();
  const response = await fetch(new URL('metrics', httpUrl), { signal: AbortSignal.timeout(60_000) });
  const text = await response.text();
  const scrapeMs = performance.now() - started;
  const lagMs: Record<string, number> = {};
  for (const line of familyLines(text, 'statecast_event_loop_lag_seconds')) {
    const q = label(line, 'quantile');
    if (q !== undefined) lagMs[q] = sampleValue(line) * 1000;
  }
  const rejected = counter(text, 'statecast_measurements_rejected_total', estimator);
  const rejectedByReason: Record<string, number> = {};
  for (const line of rejected.lines) {
    const reason = label(line, 'reason') ?? '?';
    rejectedByReason[reason] = (rejectedByReason[reason] ?? 0) + sampleValue(line);
  }
  return {
    lagMs,
    received: counter(text, 'statecast_measurements_received_total', estimator).total,
    accepted: counter(text, 'statecast_measurements_accepted_total', estimator).total,
    rejected: rejected.total,
    rejectedByReason,
    estimatesPublished: counter(text, 'statecast_estimates_published_total', estimator).total,
    mqttDropped: unlabelledValue(text, 'statecast_mqtt_dropped_total'),
    scrapeMs,
    scrapeBytes: text.length,
  };
}
