/**
 * The soak's time series: every few seconds the daemon's RSS and CPU from /proc and the traffic
 * rates; at the scrape interval also its /metrics (event-loop lag since the previous scrape).
 * Scrapes are kept apart because with 10,000 tracks one costs the daemon seconds of work (the
 * per-entity gauges), and the soak should load the daemon like a Prometheus server would, not
 * more; they run in the background, so a slow scrape never delays the 5 s RSS rows.
 */
import { probeMetrics, processFigures, type MetricsProbe } from './daemon-probe.js';
import type { SoakTraffic } from './soak-traffic.js';

/** One row of the time series; lag and scrape figures are NaN on rows without a scrape. */
export interface SoakSample {
  readonly atS: number;
  readonly rssMiB: number;
  /** The daemon's CPU use over the interval, % of one core. */
  readonly cpuPct: number;
  readonly lagP50Ms: number;
  readonly lagP99Ms: number;
  readonly lagMaxMs: number;
  readonly publishedPerS: number;
  readonly estimatesPerS: number;
  readonly queued: number;
  readonly scrapeMs: number;
  readonly scrapeMiB: number;
}

/** See the module comment. */
export class SoakSampler {
  readonly rows: SoakSample[] = [];
  private last: { atMs: number; published: number; estimates: number; cpuS: number };
  private lastScrapeMs: number;
  private readonly startCpuS: number;
  private scraping: Promise<void> | null = null;
  private scraped: MetricsProbe | null = null;

  private constructor(
    private readonly pid: number,
    private readonly httpUrl: string,
    private readonly traffic: SoakTraffic,
    private readonly startedMs: number,
    private readonly scrapeEveryMs: number,
    cpuS: number,
  ) {
    this.last = { atMs: startedMs, published: 0, estimates: 0, cpuS };
    this.lastScrapeMs = startedMs;
    this.startCpuS = cpuS;
  }

  /** Starts the series now (reads the daemon's CPU time as the zero). */
  static async start(pid: number, httpUrl: string, traffic: SoakTraffic, startedMs: number, scrapeEveryS: number): Promise<SoakSampler> {
    return new SoakSampler(pid, httpUrl, traffic, startedMs, scrapeEveryS * 1000, (await processFigures(pid)).cpuS);
  }

  /** CPU seconds the daemon used since the series started. */
  async cpuSinceStartS(): Promise<number> {
    return (await processFigures(this.pid)).cpuS - this.startCpuS;
  }

  /**
   * Takes one row and returns it. A scrape starts in the background when one is due (or
   * `scrape` says so and none is running); a row carries the figures of a scrape that finished
   * since the previous row. With `scrape`, the row waits for that scrape (the last row).
   */
  async sample(scrape = false): Promise<SoakSample> {
    const due = Date.now() - this.lastScrapeMs >= this.scrapeEveryMs - 500;
    if ((due || scrape) && this.scraping === null) {
      this.lastScrapeMs = Date.now();
      this.scraping = probeMetrics(this.httpUrl, 'yard').then(
        (p) => void (this.scraped = p),
        () => undefined,
      ).finally(() => {
        this.scraping = null;
      });
    }
    if (scrape && this.scraping !== null) await this.scraping;
    const probe = this.scraped;
    this.scraped = null;
    const figures = await processFigures(this.pid);
    const now = Date.now();
    const c = this.traffic.counts();
    const dt = (now - this.last.atMs) / 1000;
    const row: SoakSample = {
      atS: (now - this.startedMs) / 1000,
      rssMiB: figures.rssMiB,
      cpuPct: ((figures.cpuS - this.last.cpuS) / dt) * 100,
      lagP50Ms: probe?.lagMs['0.5'] ?? Number.NaN,
      lagP99Ms: probe?.lagMs['0.99'] ?? Number.NaN,
      lagMaxMs: probe?.lagMs['1'] ?? Number.NaN,
      publishedPerS: (c.published - this.last.published) / dt,
      estimatesPerS: (c.estimatesReceived - this.last.estimates) / dt,
      queued: c.queued,
      scrapeMs: probe?.scrapeMs ?? Number.NaN,
      scrapeMiB: probe === null ? Number.NaN : probe.scrapeBytes / 1048576,
    };
    this.rows.push(row);
    this.last = { atMs: now, published: c.published, estimates: c.estimatesReceived, cpuS: figures.cpuS };
    this.traffic.sweep();
    return row;
  }
}

/** One progress line for a row. */
export function sampleLine(row: SoakSample): string {
  const lag = Number.isNaN(row.lagP99Ms) ? '' : `  lag p99 ${row.lagP99Ms.toFixed(1)} ms max ${row.lagMaxMs.toFixed(1)} ms  scrape ${row.scrapeMs.toFixed(0)} ms`;
  return `  t=${row.atS.toFixed(0).padStart(5)} s  rss ${row.rssMiB.toFixed(0)} MiB  cpu ${row.cpuPct.toFixed(0)} %  ` +
    `pub ${row.publishedPerS.toFixed(0)}/s  est ${row.estimatesPerS.toFixed(0)}/s  queued ${row.queued}${lag}`;
}
