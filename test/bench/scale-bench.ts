/**
 * Scale-out throughput and failover on this machine, against a private nats-server:
 * - msgs_per_s_1 / _2: a stream preloaded with yard traffic (500 vehicles × 60 rounds, GNSS + wheel) is
 *   consumed by 1, then 2 replica processes (each a fresh stream and server), from their first
 *   message to their last. Beside each: the share of a core each replica and the server used
 *   over that window, and the CPU per message of the replicas and of the server.
 * - server_ingest_cpu_us_per_msg: the server's CPU per message while the stream was loaded (acked
 *   JetStream publishes through the mappings into the file store; the MQTT listener devices use
 *   in production adds its own cost, not measured here).
 * - engine_cpu_us_per_msg: the same input through one fresh Engine in this process, no NATS: what
 *   the estimators cost alone, so the transport's share of a replica's CPU can be read off.
 * - failover_s: with 2 replicas consuming live traffic (1,000 msg/s), replica 1 is SIGKILLed
 *   and a new process with the same ordinal started at once; the time from the kill until it
 *   reports ready (every partition caught up). It includes the new process's start-up and the
 *   lease it must wait out (the dead owner never acknowledges), reported as failover_lease_s.
 * Two cores: with 2 replicas and the server all busy, the "2" figure measures sharing, not
 * scaling; cores_busy_2 says how many cores were in use. Figures only, never assertions.
 */
import { readFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { jetstreamManager } from '@nats-io/jetstream';
import { connect } from '@nats-io/transport-node';
import { Engine } from '../../src/engine/engine.js';
import { spawnReplica, type ChildReplica } from '../scale/child-replica.js';
import { startNatsServer, type NatsTestServer } from '../scale/nats-test-server.js';
import { provision, scaleConfig, testMappings, until, yardTraffic } from '../scale/scale-fixtures.js';

const VEHICLES = 500;
const ROUNDS = 60; // 60,000 messages: long enough that start-up and JIT warm-up are a small share
/** Stamps of the bench traffic start an hour back, so nothing is refused as from the future. */
const T0_S = Math.floor(Date.now() / 1000) - 3600;
const LEASE_MS = 2000;
const CLOCK_TICKS_PER_S = 100; // USER_HZ on Linux

/** User + system CPU seconds of a process so far, from /proc (Linux). */
function processCpuS(pid: number | undefined): number {
  if (pid === undefined) return Number.NaN;
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ');
    return (Number(fields[11]) + Number(fields[12])) / CLOCK_TICKS_PER_S;
  } catch {
    return Number.NaN;
  }
}

type JetStreamClient = ReturnType<Awaited<ReturnType<typeof jetstreamManager>>['jetstream']>;

/**
 * A JetStream publish retried after a timeout (a loaded machine answers late); the message id
 * makes the server store it once however often it is sent.
 */
async function publishOnce(js: JetStreamClient, subject: string, payload: string, msgID: string): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await js.publish(subject, payload, { msgID, timeout: 10_000 });
      return;
    } catch (err) {
      if (attempt === 5) throw err;
    }
  }
}

/** Publishes yard traffic through the server's subject mappings with JetStream acks (flow-controlled). */
async function preload(url: string, rounds: number, firstRound = 0): Promise<number> {
  const nc = await connect({ servers: url });
  const js = (await jetstreamManager(nc)).jetstream();
  const inFlight = new Set<Promise<unknown>>();
  let count = 0;
  for (const m of yardTraffic(VEHICLES, rounds, firstRound, T0_S)) {
    // The device's MQTT topic as nats-server's MQTT bridge turns it into a subject.
    const subject = m.topic.replaceAll('/', '.');
    const p: Promise<unknown> = publishOnce(js, subject, m.payload, `${subject}-${count + firstRound * VEHICLES * 2}`).finally(() => inFlight.delete(p));
    inFlight.add(p);
    count += 1;
    if (inFlight.size >= 1000) await Promise.race(inFlight);
  }
  await Promise.all(inFlight);
  await nc.close();
  return count;
}

/** CPU per message of one fresh Engine fed the bench input in this process (no NATS). */
function engineCpuUsPerMsg(): number {
  const engine = new Engine(scaleConfig('nats://127.0.0.1:1').estimators, { publish() {} });
  const encoder = new TextEncoder();
  const arrivalMs = Date.now();
  const input = [...yardTraffic(VEHICLES, ROUNDS, 0, T0_S)].map((m) => ({ topic: m.topic, data: encoder.encode(m.payload) }));
  const before = process.cpuUsage();
  for (const m of input) engine.handleMessage(m.topic, m.data, arrivalMs);
  const cpu = process.cpuUsage(before);
  return (cpu.user + cpu.system) / input.length;
}

const scaleOut = (replicas: number, ordinal: number) => ({ replicas, ordinal, snapshotIntervalS: 2, leaseMs: LEASE_MS, renewMs: 500, readyPendingBelow: 100 });

/** One throughput run: the aggregate rate and where the CPU went. */
interface Throughput {
  readonly msgsPerS: number;
  /** Each replica's CPU seconds over the run's wall seconds (1 = one core), by ordinal. */
  readonly replicaCores: readonly number[];
  readonly replicaCpuUsPerMsg: number;
  readonly serverCores: number;
  readonly serverCpuUsPerMsg: number;
  /** The server's CPU per message while the stream was loaded (JetStream publish, acked, file store). */
  readonly serverIngestCpuUsPerMsg: number;
  readonly coresBusy: number;
}

async function throughput(replicas: number): Promise<Throughput> {
  const server = await startNatsServer(testMappings());
  const children: ChildReplica[] = [];
  try {
    const nc = await connect({ servers: server.url });
    await provision(await jetstreamManager(nc), scaleConfig(server.url));
    await nc.close();
    const ingestCpu0 = processCpuS(server.pid());
    const total = await preload(server.url, ROUNDS);
    const serverIngestCpuUsPerMsg = ((processCpuS(server.pid()) - ingestCpu0) * 1e6) / total;
    for (let k = 0; k < replicas; k++) children.push(spawnReplica({ url: server.url, scaleOut: scaleOut(replicas, k), reportMessages: false }));
    // The server's CPU from the first message handled: sampled when a replica first reports one.
    let serverCpu0 = Number.NaN;
    let stats = await Promise.all(children.map((c) => c.stats()));
    await until(async () => {
      stats = await Promise.all(children.map((c) => c.stats()));
      if (Number.isNaN(serverCpu0) && stats.some((s) => s.handled > 0)) serverCpu0 = processCpuS(server.pid());
      return stats.reduce((n, s) => n + s.handled, 0) >= total;
    }, `${replicas} replica(s) to handle ${total} messages`, 300_000);
    const serverCpuS = processCpuS(server.pid()) - serverCpu0;
    const wallS = (Math.max(...stats.map((s) => s.lastAtMs)) - Math.min(...stats.map((s) => s.firstAtMs))) / 1000;
    const replicaCpuS = stats.map((s) => s.cpuSinceFirstUs / 1e6);
    const replicaCpuSum = replicaCpuS.reduce((a, b) => a + b, 0);
    return {
      msgsPerS: total / wallS,
      replicaCores: replicaCpuS.map((cpu) => cpu / wallS),
      replicaCpuUsPerMsg: (replicaCpuSum * 1e6) / total,
      serverCores: serverCpuS / wallS,
      serverCpuUsPerMsg: (serverCpuS * 1e6) / total,
      serverIngestCpuUsPerMsg,
      coresBusy: (replicaCpuSum + serverCpuS) / wallS,
    };
  } finally {
    await Promise.all(children.map((c) => c.stop()));
    await server.stop();
  }
}

function throughputFigures(n: number, t: Throughput): Record<string, number> {
  const figures: Record<string, number> = { [`scale.msgs_per_s_${n}`]: t.msgsPerS };
  t.replicaCores.forEach((cores, k) => void (figures[`scale.replica${k}_cores_${n}`] = cores));
  figures[`scale.server_cores_${n}`] = t.serverCores;
  figures[`scale.cores_busy_${n}`] = t.coresBusy;
  figures[`scale.replica_cpu_us_per_msg_${n}`] = t.replicaCpuUsPerMsg;
  figures[`scale.server_cpu_us_per_msg_${n}`] = t.serverCpuUsPerMsg;
  return figures;
}

/** Seconds from the kill until the new process reported at all, consumed its first and every partition, and was ready. */
interface Failover {
  readonly upS: number;
  readonly firstConsumingS: number;
  readonly consumingS: number;
  readonly readyS: number;
}

async function failover(): Promise<Failover> {
  const server: NatsTestServer = await startNatsServer(testMappings());
  const children: ChildReplica[] = [];
  try {
    const nc = await connect({ servers: server.url });
    await provision(await jetstreamManager(nc), scaleConfig(server.url));
    await nc.close();
    await preload(server.url, 5);
    children.push(spawnReplica({ url: server.url, scaleOut: scaleOut(2, 0), reportMessages: false }));
    children.push(spawnReplica({ url: server.url, scaleOut: scaleOut(2, 1), reportMessages: false }));
    await until(() => children.every((c) => c.ready()), 'both replicas ready', 60_000);
    // Live traffic at a rate the replicas sustain: one round (1,000 messages) a second.
    let live = true;
    const traffic = (async () => {
      for (let round = 5; live; round++) {
        const next = Date.now() + 1000;
        await preload(server.url, 1, round);
        await new Promise((resolve) => setTimeout(resolve, Math.max(0, next - Date.now())));
      }
    })();
    await new Promise((resolve) => setTimeout(resolve, 3000)); // a steady state before the kill
    const killedAt = Date.now();
    await children[1]!.kill('SIGKILL');
    const restarted = spawnReplica({ url: server.url, scaleOut: scaleOut(2, 1), reportMessages: false });
    children.push(restarted);
    await until(() => restarted.ready(), 'the restarted replica ready', 60_000);
    // A child's first report is its 'ready: false' at start-up; 'started' comes once every partition consumes.
    const since = (type: 'ready' | 'consuming' | 'started'): number => ((restarted.firstAtMs.get(type) ?? Number.NaN) - killedAt) / 1000;
    const result = { upS: since('ready'), firstConsumingS: since('consuming'), consumingS: since('started'), readyS: (Date.now() - killedAt) / 1000 };
    live = false;
    await traffic;
    return result;
  } finally {
    await Promise.all(children.map((c) => c.stop()));
    await server.stop();
  }
}

function failoverFigures(f: Failover): Record<string, number> {
  return {
    'scale.failover_s': f.readyS,
    'scale.failover_process_up_s': f.upS,
    'scale.failover_first_consuming_s': f.firstConsumingS,
    'scale.failover_consuming_s': f.consumingS,
    'scale.failover_lease_s': LEASE_MS / 1000,
  };
}

/** The scale section of `npm run bench`. */
export async function benchScale(): Promise<Record<string, number>> {
  // Interrupted (Ctrl-C, a timeout), exit through 'exit' so the servers and replicas are killed.
  const interrupted = (): void => process.exit(130);
  process.once('SIGINT', interrupted);
  process.once('SIGTERM', interrupted);
  try {
    return await measure();
  } finally {
    process.removeListener('SIGINT', interrupted);
    process.removeListener('SIGTERM', interrupted);
  }
}

async function measure(): Promise<Record<string, number>> {
  if (process.env['SCALE_BENCH_ONLY'] === 'failover') return { ...failoverFigures(await failover()), 'scale.load_avg_1m_before': loadavg()[0]! };
  // Other work on this shared machine takes cores from the replicas: the load shows how much.
  const loadBefore = loadavg()[0]!;
  const one = await throughput(1);
  const two = await throughput(2);
  const engineUs = engineCpuUsPerMsg();
  const failed = await failover();
  return {
    ...throughputFigures(1, one),
    ...throughputFigures(2, two),
    'scale.ratio_2_to_1': two.msgsPerS / one.msgsPerS,
    'scale.engine_cpu_us_per_msg': engineUs,
    'scale.server_ingest_cpu_us_per_msg': one.serverIngestCpuUsPerMsg,
    ...failoverFigures(failed),
    'scale.load_avg_1m_before': loadBefore,
  };
}
