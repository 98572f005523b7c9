/**
 * End-to-end figures through a private Mosquitto: a bare relay (subscribe, JSON.parse,
 * JSON.stringify, re-publish) and then the real daemon (`statecast run`) between the same
 * publisher and subscriber, on the same broker and the same vehicle-yard GNSS fixes, then
 * publish → estimate latency at a steady rate. Prints figures; never asserts on time.
 *
 * Throughput passes run closed loop (at most WINDOW messages between publish and arrival) and
 * stop at a time budget, so a loaded machine yields fewer messages rather than a longer run;
 * the progress lines on stderr say when that happened and what was lost.
 *
 * Set STATECAST_E2E_CPU_PROF=DIR to run the daemon under `--cpu-prof` (its throughput figure
 * then includes the profiler's overhead).
 */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';
import mqtt, { type MqttClient } from 'mqtt';
import { stringify } from 'yaml';
import type { ConfigInput } from '../../src/config/config-schema.js';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { freePort } from '../helpers/free-port.js';
import { parsePrometheusText } from '../helpers/prometheus-text.js';
import { startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { collectGarbage } from './bench-timing.js';
import { spawnNodeChild, type BenchChild } from './e2e-child.js';
import {
  countArrivals, measureLatency, publishFlowControlled, quantile, toOutgoing, type LatencyRun, type OutgoingFix,
} from './e2e-traffic.js';
import { createYardFleet, type YardFix, type YardFleet } from './e2e-yard-fleet.js';

const VEHICLES = 1000;
const WARMUP_ROUNDS = 10;
/** 200 rounds of one fix per vehicle: 200,000 measured messages (after 10,000 to warm up). */
const MEASURED_ROUNDS = 200;
const LATENCY_RATE_PER_S = 5000;
const LATENCY_DURATION_S = 10;
const LATENCY_WARMUP_S = 1;
const IDLE_MS = 3000;
/**
 * Messages between publish and arrival at most (closed loop), so a throughput pass measures
 * what the middle process sustains: flooded, the daemon queues estimates behind a socket it
 * cannot drain while it works through the backlog, and drops the oldest.
 */
const WINDOW = 2000;
/** Wall-time budgets of a warm-up and of a throughput pass; on a loaded machine a pass stops there. */
const WARMUP_BUDGET_MS = 5_000;
const PASS_BUDGET_MS = 15_000;
const START_TIMEOUT_MS = 60_000;
const SEED = 7;
const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const ESTIMATE_PREFIX = 'statecast/yard/';
const RELAY_PREFIX = 'bench/relay/';

/** Throughput of one middle process between the publisher and the subscriber. */
interface PassResult {
  readonly msgsPerS: number;
  readonly cpuUsPerMsg: number;
  readonly harnessCpuUsPerMsg: number;
  /** Messages published: fewer than planned when the time budget ran out. */
  readonly sent: number;
  /** Published but never received (arrivals stopped for IDLE_MS). */
  readonly lost: number;
}

/**
 * e2e.relay_msgs_per_s, e2e.msgs_per_s, e2e.ratio_to_relay, e2e.p50_ms, e2e.p99_ms,
 * e2e.daemon_cpu_us_per_msg; with the relay's and the harness's CPU per message, the CPU ratio
 * (relay ÷ daemon CPU per message: the throughput ratio if each had a core to itself, steadier
 * than the wall-clock ratio on a busy machine), both processes' CPU per message and the relay's
 * latency at the steady rate (the floor that the broker, the harness and the machine set), and
 * the count of messages that never arrived. Empty when Mosquitto is not installed.
 */
export async function benchE2e(): Promise<Record<string, number>> {
  const broker = await startMosquitto();
  if (broker === null) {
    process.stderr.write('bench: e2e skipped: no mosquitto binary\n');
    return {};
  }
  const dir = await mkdtemp(join(tmpdir(), 'statecast-e2e-bench-'));
  const clients: MqttClient[] = [];
  const children: BenchChild[] = [];
  try {
    // Fixes 1 s apart per vehicle, ending just before now, so none is from the future.
    const referenceS = Math.floor(Date.now() / 1000) - (WARMUP_ROUNDS + MEASURED_ROUNDS) - 5;
    const fleet = createYardFleet(VEHICLES, SEED, referenceS);
    const warmup = toOutgoing(rounds(fleet, referenceS, 0, WARMUP_ROUNDS));
    const measured = toOutgoing(rounds(fleet, referenceS, WARMUP_ROUNDS, MEASURED_ROUNDS));
    const pub = await connectClient(broker.url, 'bench-publisher', clients);
    const sub = await connectClient(broker.url, 'bench-subscriber', clients);
    await sub.subscribeAsync([`${RELAY_PREFIX}+/out`, `${ESTIMATE_PREFIX}+/estimate`, 'statecast/status'], { qos: 0 });

    const relay = spawnNodeChild('relay', ['--import', 'tsx', join(ROOT, 'test/bench/e2e-relay.ts'), broker.url], ROOT);
    children.push(relay);
    await relay.waitForOutput('ready', START_TIMEOUT_MS);
    const relayPass = await throughputPass(pub, sub, relay, RELAY_PREFIX, warmup, measured);
    report('relay', relayPass);
    const relayLatency = await latencyPass('relay', pub, sub, relay, fleet, RELAY_PREFIX);
    await relay.stop();

    const { daemon, metricsUrl } = await startDaemon(broker, sub, dir, children);
    const daemonPass = await throughputPass(pub, sub, daemon, ESTIMATE_PREFIX, warmup, measured);
    report('daemon', daemonPass);
    await reportDaemonCounters(metricsUrl, warmup.length + measured.length);
    const latency = await latencyPass('daemon', pub, sub, daemon, fleet, ESTIMATE_PREFIX);
    await daemon.stop(profiling() ? 15_000 : 5_000);
    return figures(relayPass, daemonPass, relayLatency, latency);
  } finally {
    await Promise.all(children.map((c) => c.stop()));
    await Promise.all(clients.map((c) => c.endAsync(true)));
    await broker.stop();
    await rm(dir, { recursive: true, force: true });
  }
}

function figures(relay: PassResult, daemon: PassResult, relayLatency: SteadyRun, latency: SteadyRun): Record<string, number> {
  const sorted = latency.run.samplesMs.sort();
  const relaySorted = relayLatency.run.samplesMs.sort();
  return {
    'e2e.relay_msgs_per_s': relay.msgsPerS,
    'e2e.relay_cpu_us_per_msg': relay.cpuUsPerMsg,
    'e2e.msgs_per_s': daemon.msgsPerS,
    'e2e.ratio_to_relay': daemon.msgsPerS / relay.msgsPerS,
    'e2e.daemon_cpu_us_per_msg': daemon.cpuUsPerMsg,
    'e2e.cpu_ratio_to_relay': relay.cpuUsPerMsg / daemon.cpuUsPerMsg,
    'e2e.harness_cpu_us_per_msg': daemon.harnessCpuUsPerMsg,
    'e2e.relay_steady_cpu_us_per_msg': relayLatency.cpuUsPerMsg,
    'e2e.daemon_steady_cpu_us_per_msg': latency.cpuUsPerMsg,
    'e2e.relay_p50_ms': quantile(relaySorted, 0.5),
    'e2e.relay_p99_ms': quantile(relaySorted, 0.99),
    'e2e.p50_ms': quantile(sorted, 0.5),
    'e2e.p99_ms': quantile(sorted, 0.99),
    'e2e.lost_msgs': relay.lost + daemon.lost + relayLatency.run.lost + latency.run.lost,
  };
}

/** A steady-rate pass: latencies, and the middle process's CPU per message over it. */
interface SteadyRun {
  readonly run: LatencyRun;
  readonly cpuUsPerMsg: number;
}

/**
 * Publish → arrival latency at a steady rate through `middle` (warm from its throughput pass),
 * timed by the same code for the relay and the daemon so the two can be read side by side.
 */
async function latencyPass(
  name: string, pub: MqttClient, sub: MqttClient, middle: BenchChild, fleet: YardFleet, prefix: string,
): Promise<SteadyRun> {
  const cpu0 = middle.cpuS();
  const run = await measureLatency(pub, sub, fleet, prefix, LATENCY_RATE_PER_S, LATENCY_DURATION_S, LATENCY_WARMUP_S);
  const cpuS = middle.cpuS() - cpu0;
  const total = Math.round(LATENCY_RATE_PER_S * (LATENCY_DURATION_S + LATENCY_WARMUP_S));
  const cpuUsPerMsg = (cpuS * 1e6) / total;
  progress(`${name} latency: ${run.samplesMs.length} samples at ${run.achievedRatePerS.toFixed(0)} msg/s, ${run.lost} unanswered after 3 s, ${cpuUsPerMsg.toFixed(1)} µs CPU/msg`);
  return { run, cpuUsPerMsg };
}

/** `count` rounds of one fix per vehicle from round `first`, 1 s apart. */
function rounds(fleet: YardFleet, referenceS: number, first: number, count: number): YardFix[] {
  const out: YardFix[] = [];
  for (let r = first; r < first + count; r++) {
    const tText = (referenceS + r).toFixed(3);
    for (let i = 0; i < fleet.vehicles.length; i++) out.push(fleet.fix(i, tText));
  }
  return out;
}

/**
 * Warms `middle` up, then publishes `measured` and counts what reaches the subscriber on
 * `prefix`: messages per second from the first publish to the last arrival, and the middle
 * process's CPU per message over the same span.
 */
async function throughputPass(
  pub: MqttClient, sub: MqttClient, middle: BenchChild, prefix: string,
  warmup: readonly OutgoingFix[], measured: readonly OutgoingFix[],
): Promise<PassResult> {
  const warm = countArrivals(sub, prefix);
  const warmDeadlineMs = performance.now() + WARMUP_BUDGET_MS;
  const warmSent = await publishFlowControlled(pub, warmup, { deadlineMs: warmDeadlineMs, window: { arrivals: warm, size: WINDOW } });
  await warm.waitFor(warmSent, IDLE_MS);
  warm.close();
  if (warm.count === 0) throw new Error(`${middle.name}: nothing arrived on ${prefix}\n${middle.output()}`);
  collectGarbage();

  const counter = countArrivals(sub, prefix);
  const cpu0 = middle.cpuS();
  const harness0 = process.cpuUsage();
  const t0 = performance.now();
  const deadlineMs = t0 + PASS_BUDGET_MS;
  const sent = await publishFlowControlled(pub, measured, { deadlineMs, window: { arrivals: counter, size: WINDOW } });
  // At most WINDOW messages are still on their way.
  await counter.waitFor(sent, IDLE_MS);
  counter.close();
  const cpuS = middle.cpuS() - cpu0;
  const harness = process.cpuUsage(harness0);
  const count = counter.count;
  return {
    msgsPerS: count / ((counter.lastMs - t0) / 1000),
    cpuUsPerMsg: (cpuS * 1e6) / count,
    harnessCpuUsPerMsg: (harness.user + harness.system) / count,
    sent,
    lost: sent - count,
  };
}

/** Starts `statecast run` on the test broker and resolves once it has announced itself online. */
async function startDaemon(
  broker: TestMosquitto, sub: MqttClient, dir: string, children: BenchChild[],
): Promise<{ daemon: BenchChild; metricsUrl: string }> {
  const configFile = join(dir, 'e2e-bench.yaml');
  const httpPort = await freePort();
  await writeFile(configFile, stringify(daemonConfig(broker.url, httpPort)));
  const flags = profiling() ? ['--cpu-prof', `--cpu-prof-dir=${process.env['STATECAST_E2E_CPU_PROF']}`] : [];
  const online = new Promise<void>((resolve) => {
    const onStatus = (topic: string, payload: Buffer): void => {
      if (topic !== 'statecast/status' || !payload.toString().includes('"online"')) return;
      sub.off('message', onStatus);
      resolve();
    };
    sub.on('message', onStatus);
  });
  const daemon = spawnNodeChild('daemon', [...flags, join(ROOT, 'bin/statecast.js'), 'run', '--config', configFile], ROOT);
  children.push(daemon);
  const failed = daemon.exited.then(() => Promise.reject(new Error(`the daemon exited during start-up\n${daemon.output()}`)));
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`the daemon was not online within ${START_TIMEOUT_MS} ms\n${daemon.output()}`)), START_TIMEOUT_MS);
  });
  failed.catch(() => undefined);
  try {
    await Promise.race([online, failed, timeout]);
  } finally {
    clearTimeout(timer);
  }
  return { daemon, metricsUrl: `http://127.0.0.1:${httpPort}/metrics` };
}

/**
 * Prints the daemon's own counts (from one GET of its /metrics): measurements received and
 * estimates made, so estimates that never reached the subscriber can be told apart from
 * measurements the daemon never saw.
 */
async function reportDaemonCounters(metricsUrl: string, sent: number): Promise<void> {
  let text: string;
  try {
    text = await (await fetch(metricsUrl, { signal: AbortSignal.timeout(5000) })).text();
  } catch (err) {
    progress(`daemon counters unavailable (${(err as Error).message}): its event loop may be blocked`);
    return;
  }
  const families = parsePrometheusText(text);
  const total = (name: string): number => (families.get(name)?.samples ?? []).reduce((sum, s) => sum + s.value, 0);
  const received = total('statecast_measurements_received_total');
  const made = total('statecast_estimates_published_total');
  progress(`daemon counters: ${received} of ${sent} measurements received, ${made} estimates made`);
}

/**
 * One yard estimator fed by GNSS only (constant velocity east/north, geodetic fix), the EKF
 * (the yard's UKF is there for the wheel-speed update, absent here), 64 history entries (a
 * minute at 1 Hz), and a gate so wide that consistent fixes are never refused, so each fix
 * yields one estimate. QoS 0 out, no checkpoints, warnings only.
 */
function daemonConfig(brokerUrl: string, httpPort: number): ConfigInput {
  const yard = yardEstimatorInput();
  const gnss = yard.sensors['gnss'];
  if (gnss === undefined) throw new Error('the yard estimator has no gnss sensor');
  return {
    broker: { url: brokerUrl, clientId: 'statecast-e2e-bench' },
    http: { port: httpPort },
    checkpoint: { enabled: false },
    log: { level: 'warn' },
    estimators: [{
      ...yard,
      filter: { kind: 'ekf' },
      history: { horizonS: 60, maxEntries: 64 },
      gate: { probability: 0.999999 },
      sensors: { gnss },
      publish: { qos: 0 },
    }],
  };
}

async function connectClient(url: string, clientId: string, clients: MqttClient[]): Promise<MqttClient> {
  const client = await mqtt.connectAsync(url, { clientId, protocolVersion: 5, reconnectPeriod: 0 });
  // A paced publish of one small packet must leave at once, not wait for the previous one's ACK.
  (client.stream as { setNoDelay?: (on: boolean) => unknown }).setNoDelay?.(true);
  clients.push(client);
  return client;
}

/** True when STATECAST_E2E_CPU_PROF names a directory for the daemon's CPU profile. */
function profiling(): boolean {
  return (process.env['STATECAST_E2E_CPU_PROF'] ?? '') !== '';
}

function report(name: string, pass: PassResult): void {
  const cut = pass.sent < MEASURED_ROUNDS * VEHICLES ? `; cut short by the ${PASS_BUDGET_MS / 1000} s budget after ${pass.sent} messages` : '';
  progress(`${name} ${pass.msgsPerS.toFixed(0)} msg/s, ${pass.cpuUsPerMsg.toFixed(1)} µs CPU/msg, ${pass.lost} lost${cut}`);
}

function progress(line: string): void {
  process.stderr.write(`bench: e2e ${line}\n`);
}
