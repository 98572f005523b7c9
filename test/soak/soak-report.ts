/**
 * The soak's figures as text, with the targets beside them. Targets are printed, never
 * asserted on time: only the short CI run checks the counts (no loss, daemon up).
 */
import type { SoakResult } from './soak-harness.js';

/** Share of the run left out of the RSS growth figure (start-up and filling 10,000 tracks). */
export const WARM_UP_SHARE = 1 / 3;

/** The verdicts beside the targets. */
export interface SoakVerdicts {
  /**
   * Measurements published (acknowledged by the broker) but never counted by the daemon:
   * published − (received − duplicates), floored at 0. A reconnect makes the broker deliver
   * unacknowledged messages again; the daemon refuses a repeat of an applied reading as a
   * duplicate, while a repeat of a refused one is refused again and counted twice, so the sum
   * can exceed the published count but never hides a gap larger than those repeats.
   */
  readonly lostBeforeDaemon: number;
  /** Readings the broker delivered more than once (refused by the daemon as duplicates). */
  readonly redelivered: number;
  /** Accepted measurements for which the daemon produced no estimate (every-update mode: should be 0). */
  readonly estimatesNotProduced: number;
  /**
   * Estimates produced but not received by the soak's subscriber. The daemon's bounded outgoing
   * queue sheds the oldest estimates when the broker cannot take them as fast (the next estimate
   * of a track carries the same information), so this is shedding, not a lost measurement.
   */
  readonly estimatesMissing: number;
  /**
   * Estimates that reached the broker: its PUBLISH total less the soak's measurements, the
   * daemon's health messages and its one retained status.
   */
  readonly estimatesAtBroker: number;
  /** No accepted measurement lost: every published one counted, every accepted one estimated. */
  readonly noLoss: boolean;
  /** RSS growth from the end of warm-up to the end (%), NaN without samples. */
  readonly rssGrowthPct: number;
  /** The worst per-interval p99 of the daemon's event-loop lag after warm-up (ms). */
  readonly lagP99WorstMs: number;
  readonly lagMaxMs: number;
}

/** Computes the verdicts from a result. */
export function soakVerdicts(r: SoakResult): SoakVerdicts {
  const redelivered = r.daemon.rejectedByReason['duplicate'] ?? 0;
  const lostBeforeDaemon = Math.max(0, r.traffic.published - (r.daemon.received - redelivered));
  const estimatesNotProduced = r.daemon.accepted - r.daemon.estimatesPublished;
  const estimatesMissing = r.daemon.estimatesPublished - r.traffic.estimatesReceived;
  const afterWarmUp = r.samples.filter((s) => s.atS >= r.loadS * WARM_UP_SHARE && Number.isFinite(s.rssMiB));
  const first = afterWarmUp[0];
  const lastSample = afterWarmUp[afterWarmUp.length - 1];
  const rssGrowthPct = first === undefined || lastSample === undefined ? Number.NaN : ((lastSample.rssMiB - first.rssMiB) / first.rssMiB) * 100;
  const lagged = afterWarmUp.length > 0 ? afterWarmUp : r.samples;
  return {
    lostBeforeDaemon,
    redelivered,
    estimatesNotProduced,
    estimatesMissing,
    estimatesAtBroker: r.broker.publishesReceived - r.traffic.published - r.broker.healthMessages - 1,
    noLoss: lostBeforeDaemon === 0 && estimatesNotProduced === 0,
    rssGrowthPct,
    lagP99WorstMs: Math.max(...lagged.map((s) => s.lagP99Ms).filter(Number.isFinite)),
    lagMaxMs: Math.max(...r.samples.map((s) => s.lagMaxMs).filter(Number.isFinite)),
  };
}

const f0 = (v: number): string => (Number.isFinite(v) ? v.toFixed(0) : '-');
const f1 = (v: number): string => (Number.isFinite(v) ? v.toFixed(1) : '-');
const mark = (ok: boolean): string => (ok ? 'met' : 'MISSED');

/** The report (plain text, one figure per line, then the RSS table). */
export function formatSoakReport(r: SoakResult): string {
  const v = soakVerdicts(r);
  const o = r.options;
  const rate = r.traffic.published / r.loadS;
  const reasons = Object.entries(r.daemon.rejectedByReason).filter(([, n]) => n > 0).map(([k, n]) => `${k} ${n}`).join(', ') || 'none';
  const lines = [
    `statecast soak: vehicle yard, ${o.entities} tractors, seed ${o.seed}, target ${o.ratePerS} measurements/s, ${f0(r.loadS)} s of load` +
      `${o.checkpoints ? '' : ' (checkpoints off)'}`,
    `  load average before ${r.loadBefore.map((x) => x.toFixed(2)).join(' ')}, after ${r.loadAfter.map((x) => x.toFixed(2)).join(' ')}`,
    `  generator: ${r.generator.produced} measurements produced, ${r.generator.kept} kept; ${r.generator.secondsPerScenarioSecond.toFixed(2)} s to generate a scenario second, ` +
      `${f0(r.generator.prefillS)} s generated ahead; ${r.generator.lateTicks} of ${r.generator.ticks} ticks released > 100 ms late (worst ${f0(r.generator.maxTickLateMs)} ms)`,
    `  throughput: ${r.traffic.published} published at QoS 1 and acknowledged (${f0(rate)}/s), ${r.traffic.estimatesReceived} estimates received; drained in ${f1(r.drainS)} s`,
    `  daemon CPU: ${f1(r.daemonCpuS)} s over the load (${f0((r.daemonCpuS / r.loadS) * 100)} % of a core), ${f1((r.daemonCpuS * 1e6) / Math.max(1, r.daemon.received))} µs per measurement` +
      '',
    `  daemon warnings: ${Object.entries(r.daemonWarnings).map(([m, n]) => `${n}× ${m}`).join('; ') || 'none'}`,
    ...r.brokerDropLines.map((l) => `  mosquitto: ${l}`),
    `  daemon counters: ${r.daemon.received} received = ${r.daemon.accepted} accepted + ${r.daemon.rejected} rejected (${reasons}); ${r.daemon.estimatesPublished} estimates published`,
    `  loss: ${v.lostBeforeDaemon} published but not counted by the daemon (${v.redelivered} delivered twice after reconnects and refused as duplicates), ` +
      `${v.estimatesNotProduced} accepted without an estimate produced` +
      `   [target: no loss of accepted measurements — ${mark(v.noLoss)}]`,
    v.estimatesMissing === 0
      ? `  estimate delivery: every produced estimate reached the subscriber`
      : `  estimate delivery: ${v.estimatesMissing} of ${r.daemon.estimatesPublished} produced estimates did not reach the subscriber; ` +
        `the broker received about ${f0(v.estimatesAtBroker)} of them (so about ${f0(r.daemon.estimatesPublished - v.estimatesAtBroker)} never left ` +
        `the daemon; its outgoing queue counted ${f0(r.daemon.mqttDropped)} drops of estimates and health messages in statecast_mqtt_dropped_total) ` +
        `and dropped ${f0(r.broker.publishesDropped)} messages`,
    `  publish→estimate latency (${r.latencyMs.count} matched): p50 ${f1(r.latencyMs.p50)} ms, p90 ${f1(r.latencyMs.p90)} ms, p99 ${f1(r.latencyMs.p99)} ms, max ${f1(r.latencyMs.max)} ms`,
    `  /metrics scrape (every ${o.scrapeEveryS} s): up to ${f0(Math.max(...r.samples.map((x) => x.scrapeMs).filter(Number.isFinite)))} ms for ${f1(Math.max(...r.samples.map((x) => x.scrapeMiB).filter(Number.isFinite)))} MiB`,
    `  event-loop lag: worst interval p99 after warm-up ${f1(v.lagP99WorstMs)} ms, max ${f1(v.lagMaxMs)} ms   [target: p99 < 50 ms — ${mark(v.lagP99WorstMs < 50)}]`,
    `  RSS growth after warm-up (first third left out): ${f1(v.rssGrowthPct)} %   [target: < 10 % — ${mark(v.rssGrowthPct < 10)}]`,
    `  daemon ${r.daemonUp ? 'stayed up' : `DID NOT STAY UP:\n${r.daemonTail}`}`,
    '',
    '     t s   RSS MiB   CPU %   lag p50 ms   lag p99 ms   lag max ms   published/s   estimates/s   queued   scrape ms   scrape MiB',
    ...r.samples.map((s) => [
      f0(s.atS).padStart(8), f0(s.rssMiB).padStart(9), f0(s.cpuPct).padStart(7), f1(s.lagP50Ms).padStart(12), f1(s.lagP99Ms).padStart(12), f1(s.lagMaxMs).padStart(12),
      f0(s.publishedPerS).padStart(13), f0(s.estimatesPerS).padStart(13), String(s.queued).padStart(8), f0(s.scrapeMs).padStart(11), f1(s.scrapeMiB).padStart(12),
    ].join(' ')),
  ];
  return `${lines.join('\n')}\n`;
}
