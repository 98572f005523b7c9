/**
 * The soak: a private Mosquitto (the test config, which raises its queue limits), the real
 * daemon with the vehicle-yard estimator, and the scaled vehicle-yard scenario advanced in real
 * time on a worker thread and thinned to the target rate, all on 127.0.0.1. It samples the
 * daemon every few seconds, then drains and accounts for every measurement. Everything it
 * starts is stopped in `finally`, whatever went wrong.
 */
import { loadavg } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { MqttClient } from 'mqtt';
import { startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { startSoakDaemon, type SoakDaemon } from '../helpers/soak-daemon.js';
import { probeMetrics, type MetricsProbe } from './daemon-probe.js';
import { soakDaemonConfig } from './soak-config.js';
import type { FeedMessage, FeedSettings, FeedStart } from './scenario-feed-worker.js';
import { RawMqttPublisher } from './raw-mqtt-publisher.js';
import { SoakSampler, sampleLine, type SoakSample } from './soak-sampler.js';
import { SoakTraffic, type TrafficCounts } from './soak-traffic.js';

export type { SoakSample } from './soak-sampler.js';

/** How to run the soak. */
export interface SoakOptions {
  readonly durationS: number;
  /** Tractors in the scaled scenario (default 10,000). */
  readonly entities: number;
  /** Aggregate measurements per second after thinning (default 20,000). */
  readonly ratePerS: number;
  readonly seed: number;
  readonly checkpoints: boolean;
  /** Seconds between samples of RSS, CPU and rates (5 in the CLI). */
  readonly sampleEveryS: number;
  /** Seconds between /metrics scrapes (15 in the CLI, Prometheus's default interval). */
  readonly scrapeEveryS: number;
  /** Live progress lines. */
  readonly log: (line: string) => void;
  /** Ends the load early (the run is still drained, accounted and cleaned up). */
  readonly signal?: AbortSignal;
  /** Extra node options for the daemon, e.g. `--cpu-prof` to see where its time goes. */
  readonly daemonNodeArgs?: readonly string[];
}

/** Everything the report prints. */
export interface SoakResult {
  readonly options: Omit<SoakOptions, 'log' | 'signal' | 'daemonNodeArgs'>;
  readonly loadBefore: readonly number[];
  readonly loadAfter: readonly number[];
  readonly loadS: number;
  readonly traffic: TrafficCounts;
  readonly daemon: MetricsProbe;
  readonly latencyMs: { count: number; p50: number; p90: number; p99: number; max: number };
  readonly samples: readonly SoakSample[];
  /** The generator: messages made and kept, its speed, and how late its ticks were released. */
  readonly generator: {
    produced: number; kept: number; secondsPerScenarioSecond: number; prefillS: number;
    ticks: number; lateTicks: number; maxTickLateMs: number;
  };
  readonly daemonUp: boolean;
  /** The daemon's last output when it did not stay up. */
  readonly daemonTail: string;
  readonly drainS: number;
  /** CPU seconds the daemon used during the load phase. */
  readonly daemonCpuS: number;
  /** Mosquitto log lines about dropped messages or lost clients, if any. */
  readonly brokerDropLines: readonly string[];
  /** The daemon's warning and error messages with their counts (a soak should have none). */
  readonly daemonWarnings: Readonly<Record<string, number>>;
  /**
   * Mosquitto's $SYS totals at the end (PUBLISH packets received from all clients, and dropped)
   * and the daemon's health messages the soak's subscriber had seen when that report came.
   */
  readonly broker: { readonly publishesReceived: number; readonly publishesDropped: number; readonly healthMessages: number };
}

const SYS_RECEIVED = '$SYS/broker/publish/messages/received';
const SYS_DROPPED = '$SYS/broker/publish/messages/dropped';

// Each tractor reports GNSS at 1 Hz and wheel speed at 10 Hz.
const GNSS_HZ = 1;
const WHEEL_HZ = 10;

/** Keep every GNSS fix the rate allows, then fill the rest of the rate with wheel speed. */
export function thinningRatios(entities: number, ratePerS: number): { gnssKeepRatio: number; wheelKeepRatio: number } {
  const gnssKeepRatio = Math.min(1, ratePerS / (entities * GNSS_HZ));
  const wheelKeepRatio = Math.min(1, Math.max(0, ratePerS - entities * GNSS_HZ * gnssKeepRatio) / (entities * WHEEL_HZ));
  return { gnssKeepRatio, wheelKeepRatio };
}

/** The worker runs TypeScript: register tsx inside it, then load the feed module. */
function startFeed(settings: FeedSettings): Worker {
  const tsxApi = import.meta.resolve('tsx/esm/api');
  const feed = new URL('./scenario-feed-worker.ts', import.meta.url).href;
  const bootstrap = `import(${JSON.stringify(tsxApi)}).then((m) => { m.register(); return import(${JSON.stringify(feed)}); })`;
  return new Worker(bootstrap, { eval: true, workerData: settings });
}

/**
 * Polls `read` until it reaches `target` or stops moving for `stillPolls` polls in a row, and
 * returns the last value: a drain waits as long as there is progress, however slow the machine.
 */
async function untilSettled(read: () => Promise<number>, target: number, intervalMs: number, stillPolls: number): Promise<number> {
  let value = await read();
  for (let still = 0; value < target && still < stillPolls;) {
    await new Promise((resolve) => setTimeout(resolve, intervalMs));
    const next = await read();
    still = next === value ? still + 1 : 0;
    value = next;
  }
  return value;
}

/** Runs the soak (see the module comment). */
export async function runSoak(options: SoakOptions): Promise<SoakResult> {
  const { log } = options;
  const loadBefore = loadavg();
  let broker: TestMosquitto | null = null;
  let daemon: SoakDaemon | null = null;
  let publisher: RawMqttPublisher | undefined;
  let subscriber: MqttClient | undefined;
  let worker: Worker | null = null;
  try {
    broker = await startMosquitto();
    if (broker === null) throw new Error('mosquitto is not installed: the soak needs it');
    const thinning = thinningRatios(options.entities, options.ratePerS);
    daemon = await startSoakDaemon({
      nodeArgs: options.daemonNodeArgs ?? [],
      config: soakDaemonConfig({
        brokerUrl: broker.url, entities: options.entities, checkpoints: options.checkpoints,
        gnssHz: GNSS_HZ * thinning.gnssKeepRatio, wheelHz: WHEEL_HZ * thinning.wheelKeepRatio,
      }),
    });
    await daemon.waitReady(30_000);
    subscriber = await connectRawClient(broker.url, { protocolVersion: 5 });
    await subscriber.subscribeAsync('statecast/yard/+/estimate', { qos: 0 });
    // Mosquitto's own counters (every 10 s), to tell where undelivered estimates went.
    const brokerStats = { received: Number.NaN, dropped: Number.NaN, updates: 0, healthMessages: 0, healthAtReport: 0 };
    subscriber.on('message', (topic, payload) => {
      // Health messages share the broker's PUBLISH total with the estimates; count them apart.
      if (topic.endsWith('/health') || topic.endsWith('/health-events')) brokerStats.healthMessages += 1;
      else if (topic === SYS_RECEIVED) {
        brokerStats.received = Number(payload.toString());
        brokerStats.healthAtReport = brokerStats.healthMessages;
      }
      else if (topic === SYS_DROPPED) brokerStats.dropped = Number(payload.toString());
      else return;
      brokerStats.updates += 1;
    });
    await subscriber.subscribeAsync([SYS_RECEIVED, SYS_DROPPED, 'statecast/yard/health-events', 'statecast/yard/+/health'], { qos: 0 });
    publisher = await RawMqttPublisher.connect(broker.url, `yard-gateway-soak-${process.pid}`);
    const traffic = new SoakTraffic(publisher, subscriber);
    log(`soak: mosquitto ${broker.url}, daemon pid ${daemon.pid} at ${daemon.httpUrl}, ${options.entities} tractors, target ${options.ratePerS}/s for ${options.durationS} s`);

    const generator = { produced: 0, kept: 0, secondsPerScenarioSecond: Number.NaN, prefillS: Number.NaN };
    const feedStarted = Date.now();
    let feedDone = false;
    let started: (start: FeedStart) => void = () => {};
    const start = new Promise<FeedStart>((resolve) => (started = resolve));
    worker = startFeed({ seed: options.seed, entities: options.entities, ...thinning, runS: options.durationS, aheadS: 30 });
    worker.on('message', (m: FeedMessage) => {
      if (m.type === 'start') started(m);
      else if (m.type === 'done') feedDone = true;
      else {
        generator.produced += m.produced;
        generator.kept += m.count;
        traffic.enqueue(m);
      }
    });
    const workerFailed = new Promise<never>((_, reject) => worker!.once('error', reject));
    workerFailed.catch(() => undefined);
    const { startTimeS, secondsPerScenarioSecond } = await Promise.race([start, workerFailed]);
    generator.secondsPerScenarioSecond = secondsPerScenarioSecond;
    generator.prefillS = startTimeS - feedStarted / 1000;
    log(`soak: generating ahead (${secondsPerScenarioSecond.toFixed(2)} s per scenario second); load starts in ${generator.prefillS.toFixed(0)} s`);
    const startedMs = startTimeS * 1000;
    await new Promise((resolve) => setTimeout(resolve, Math.max(0, startedMs - Date.now())));
    const releaser = setInterval(() => traffic.release(Date.now()), 10);

    const d = daemon;
    const sampler = await SoakSampler.start(d.pid, d.httpUrl, traffic, startedMs, options.scrapeEveryS);
    const endMs = startedMs + options.durationS * 1000;
    // (The loop below samples; the releaser above publishes each tick when it is due.)
    while (Date.now() < endMs && options.signal?.aborted !== true && d.running) {
      const nextMs = Math.min(endMs, Date.now() + options.sampleEveryS * 1000);
      await Promise.race([new Promise((resolve) => setTimeout(resolve, nextMs - Date.now())), workerFailed]);
      if (d.running) log(sampleLine(await sampler.sample(Date.now() >= endMs)));
    }
    // The last ticks are due at the end; let them out, then stop the generator.
    await untilSettled(async () => (feedDone ? 1 : 0), 1, 100, 50);
    traffic.release(Date.now());
    clearInterval(releaser);
    worker.postMessage('stop');
    // The load phase ends at endMs (or at an abort), not when the last, possibly slow, scrape returns.
    const loadS = (Math.min(Date.now(), endMs) - startedMs) / 1000;
    const daemonCpuS = await sampler.cpuSinceStartS();

    // Drain: publish what is queued, then wait for the daemon to count every measurement and
    // for every accepted measurement's estimate to come back (or for the counts to stop moving).
    const drainStarted = Date.now();
    await untilSettled(async () => traffic.counts().published + traffic.counts().failed, generator.kept, 250, 40);
    const published = traffic.counts().published;
    // Repeats after a reconnect are refused as duplicates: count distinct readings. A scrape
    // that fails (a daemon too busy to answer in time, or gone) counts as no progress.
    let probe: MetricsProbe | null = null;
    const scrape = async (): Promise<MetricsProbe | null> => {
      if (!d.running) return probe;
      probe = await probeMetrics(d.httpUrl, 'yard').catch(() => probe);
      return probe;
    };
    await untilSettled(async () => {
      const p = await scrape();
      return p === null ? 0 : p.received - (p.rejectedByReason['duplicate'] ?? 0);
    }, published, 3000, 5);
    await untilSettled(async () => traffic.counts().estimatesReceived, (await scrape())?.accepted ?? 0, 250, 40);
    await scrape();
    if (probe === null) throw new Error(`no /metrics scrape succeeded after the load; the daemon ${d.running ? 'did not answer' : 'exited'}\n${d.tail()}`);
    const finalProbe: MetricsProbe = probe;
    // One more report of the broker's counters, taken after everything above settled.
    const updates = brokerStats.updates;
    await untilSettled(async () => brokerStats.updates - updates, 2, 500, 30);
    const drainS = (Date.now() - drainStarted) / 1000;
    const brokerDropLines = (await broker.log()).split('\n').filter((l) => /drop|disconnect|timeout|closed/i.test(l)).slice(0, 10);
    const daemonWarnings = Object.fromEntries(d.warningCounts);

    const h = traffic.latency;
    return {
      options: {
        durationS: options.durationS, entities: options.entities, ratePerS: options.ratePerS, seed: options.seed,
        checkpoints: options.checkpoints, sampleEveryS: options.sampleEveryS, scrapeEveryS: options.scrapeEveryS,
      },
      loadBefore, loadAfter: loadavg(), loadS,
      traffic: traffic.counts(), daemon: finalProbe,
      latencyMs: { count: h.count, p50: h.percentile(0.5), p90: h.percentile(0.9), p99: h.percentile(0.99), max: h.max },
      samples: sampler.rows,
      generator: { ...generator, ticks: traffic.counts().ticksReleased, lateTicks: traffic.counts().lateTicks, maxTickLateMs: traffic.counts().maxTickLateMs },
      daemonUp: d.running,
      daemonTail: d.running ? '' : d.tail(40),
      drainS,
      daemonCpuS,
      brokerDropLines,
      daemonWarnings,
      broker: { publishesReceived: brokerStats.received, publishesDropped: brokerStats.dropped, healthMessages: brokerStats.healthAtReport },
    };
  } finally {
    await worker?.terminate().catch(() => undefined);
    await publisher?.end().catch(() => undefined);
    await endRawClient(subscriber).catch(() => undefined);
    await daemon?.stop(20_000).catch(() => undefined);
    await broker?.stop().catch(() => undefined);
  }
}
