/**
 * End-to-end figures through a private Mosquitto: a bare relay (subscribe, JSON.parse,
 * JSON.stringify, re-publish) and then the real daemon (`statecast run`) between the same
 * publisher and subscriber, on the same broker and the same vehicle-yard GNSS fixes, then
 * publish → estimate latency at a steady rate. Prints figures; never asserts on time.
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
import { startMosquitto, type TestMosquitto } from '../helpers/mosquitto.js';
import { collectGarbage } from './bench-timing.js';
import { spawnNodeChild, type BenchChild } from './e2e-child.js';
import {
  countArrivals, measureLatency, publishFlowControlled, quantile, toOutgoing, type OutgoingFix,
} from './e2e-traffic.js';
import { createYardFleet, type YardFix, type YardFleet } from './e2e-yard-fleet.js';

const VEHICLES = 1000;
const WARMUP_ROUNDS = 20;
/** 200 rounds of one fix per vehicle: 200,000 measured messages. */
const MEASURED_ROUNDS = 200;
const LATENCY_RATE_PER_S = 5000;
const LATENCY_DURATION_S = 10;
const LATENCY_WARMUP_S = 1;
const IDLE_MS = 3000;
/** Wall-time budget of one throughput pass; on a loaded machine the pass stops there. */
const PASS_BUDGET_MS = 20_000;
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
  /** Sent but never received (arrivals stopped for IDLE_MS); 0 when the pass was cut short. */
  readonly lost: number;
  /** Messages still on their way when the time budget ran out. */
  readonly inFlight: number;
}

/**
 * e2e.relay_msgs_per_s, e2e.msgs_per_s, e2e.ratio_to_relay, e2e.p50_ms, e2e.p99_ms,
 * e2e.daemon_cpu_us_per_msg, with the relay's and the harness's CPU per message and the count
 * of messages that never arrived. Empty when Mosquitto is not installed.
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
    await relay.stop();
    report('relay', relayPass);

    const daemon = await startDaemon(broker, sub, dir, children);
    const daemonPass = await throughputPass(pub, sub, daemon, ESTIMATE_PREFIX, warmup, measured);
    report('daemon', daemonPass);
    const latency = await measureLatency(pub, sub, fleet, ESTIMATE_PREFIX, LATENCY_RATE_PER_S, LATENCY_DURATION_S, LATENCY_WARMUP_S);
    progress(`latency: ${latency.samplesMs.length} samples at ${latency.achievedRatePerS.toFixed(0)} msg/s, ${latency.lost} unanswered after 3 s`);
    await daemon.stop(15_000);

    const sorted = latency.samplesMs.sort();
    return {
      'e2e.relay_msgs_per_s': relayPass.msgsPerS,
      'e2e.relay_cpu_us_per_msg': relayPass.cpuUsPerMsg,
      'e2e.msgs_per_s': daemonPass.msgsPerS,
      'e2e.ratio_to_relay': daemonPass.msgsPerS / relayPass.msgsPerS,
      'e2e.daemon_cpu_us_per_msg': daemonPass.cpuUsPerMsg,
      'e2e.harness_cpu_us_per_msg': daemonPass.harnessCpuUsPerMsg,
      'e2e.p50_ms': quantile(sorted, 0.5),
      'e2e.p99_ms': quantile(sorted, 0.99),
      'e2e.lost_msgs': relayPass.lost + daemonPass.lost + latency.lost,
    };
  } finally {
    await Promise.all(children.map((c) => c.stop()));
    await Promise.all(clients.map((c) => c.endAsync(true)));
    await broker.stop();
    await rm(dir, { recursive: true, force: true });
  }
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
  const warmDeadlineMs = performance.now() + PASS_BUDGET_MS / 2;
  const warmSent = await publishFlowControlled(pub, warmup, warmDeadlineMs);
  await warm.waitFor(warmSent, IDLE_MS, warmDeadlineMs);
  warm.close();
  if (warm.count === 0) throw new Error(`${middle.name}: nothing arrived on ${prefix}\n${middle.output()}`);
  collectGarbage();

  const counter = countArrivals(sub, prefix);
  const cpu0 = middle.cpuS();
  const harness0 = process.cpuUsage();
  const t0 = performance.now();
  const deadlineMs = t0 + PASS_BUDGET_MS;
  const sent = await publishFlowControlled(pub, measured, deadlineMs);
  await counter.waitFor(sent, IDLE_MS, deadlineMs);
  counter.close();
  const cpuS = middle.cpuS() - cpu0;
  const harness = process.cpuUsage(harness0);
  const count = counter.count;
  const cutShort = sent < measured.length || (count < sent && performance.now() > deadlineMs);
  return {
    msgsPerS: count / ((counter.lastMs - t0) / 1000),
    cpuUsPerMsg: (cpuS * 1e6) / count,
    harnessCpuUsPerMsg: (harness.user + harness.system) / count,
    lost: cutShort ? 0 : sent - count,
    inFlight: cutShort ? sent - count : 0,
  };
}

/** Starts `statecast run` on the test broker and resolves once it has announced itself online. */
async function startDaemon(broker: TestMosquitto, sub: MqttClient, dir: string, children: BenchChild[]): Promise<BenchChild> {
  const configFile = join(dir, 'e2e-bench.yaml');
  await writeFile(configFile, stringify(daemonConfig(broker.url, await freePort())));
  const profileDir = process.env['STATECAST_E2E_CPU_PROF'];
  const flags = profileDir === undefined || profileDir === '' ? [] : ['--cpu-prof', `--cpu-prof-dir=${profileDir}`];
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
  return daemon;
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
  clients.push(client);
  return client;
}

function report(name: string, pass: PassResult): void {
  const cut = pass.inFlight > 0 ? `; cut short at the ${PASS_BUDGET_MS / 1000} s budget with ${pass.inFlight} in flight` : '';
  progress(`${name} ${pass.msgsPerS.toFixed(0)} msg/s, ${pass.cpuUsPerMsg.toFixed(1)} µs CPU/msg, ${pass.lost} lost${cut}`);
}

function progress(line: string): void {
  process.stderr.write(`bench: e2e ${line}\n`);
}
