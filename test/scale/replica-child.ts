/**
 * One replica in its own process, for tests that must SIGKILL a replica (and for the bench):
 * `node --import tsx test/scale/replica-child.ts '<json ChildOptions>'`. It reports to its
 * parent over IPC: every readiness change (with partition figures), every stream message
 * handled, and on request the yard tracks' x̂ and P; `{ type: 'stop' }` stops it gracefully.
 */
import { buildReplica, scaleConfig, trackStates } from './scale-fixtures.js';

/** What the parent passes. */
export interface ChildOptions {
  readonly url: string;
  readonly scaleOut: Record<string, unknown>;
  /** Report each handled message (tests) or only counts (bench). */
  readonly reportMessages: boolean;
}

/** What a child sends. */
export type ChildReport =
  | { type: 'started' }
  | { type: 'ready'; ready: boolean; partitions: { partition: number; seq: number; phase: string }[] }
  | { type: 'consuming'; partition: number; fromSeq: number; restored: number }
  | { type: 'handled'; partition: number; seq: number }
  | { type: 'snapshot'; partition: number; seq: number }
  | { type: 'states'; states: [string, { x: number[]; P: number[] }][] }
  | { type: 'stats'; handled: number; firstAtMs: number; lastAtMs: number; cpuSinceFirstUs: number }
  | { type: 'stopped' }
  | { type: 'error'; message: string };

const send = (r: ChildReport): void => void process.send?.(r);
const options = JSON.parse(process.argv[2] ?? '{}') as ChildOptions;
const replica = buildReplica(scaleConfig(options.url, options.scaleOut), 'statecast-child', String(process.pid));
const node = replica.node;
const figures = (): { partition: number; seq: number; phase: string }[] =>
  node.stats().partitions.map((p) => ({ partition: p.partition, seq: p.seq, phase: p.phase }));
node.events.on('ready:changed', ({ ready }) => send({ type: 'ready', ready, partitions: figures() }));
node.events.on('partition:consuming', (e) => send({ type: 'consuming', partition: e.partition, fromSeq: e.fromSeq, restored: e.restored }));
node.events.on('snapshot:committed', (e) => send({ type: 'snapshot', partition: e.partition, seq: e.seq }));
let handled = 0;
let firstAtMs = 0;
let lastAtMs = 0;
let cpuAtFirst: NodeJS.CpuUsage = { user: 0, system: 0 };
node.events.on('message', (m) => {
  if (handled === 0) {
    firstAtMs = Date.now();
    cpuAtFirst = process.cpuUsage();
  }
  handled += 1;
  lastAtMs = Date.now();
  if (options.reportMessages) send({ type: 'handled', partition: m.partition, seq: m.seq });
});
process.on('message', (m: { type: string }) => {
  if (m.type === 'states') send({ type: 'states', states: [...trackStates(replica.handle.engine)] });
  if (m.type === 'stats') {
    const cpu = process.cpuUsage(cpuAtFirst);
    send({ type: 'stats', handled, firstAtMs, lastAtMs, cpuSinceFirstUs: handled === 0 ? 0 : cpu.user + cpu.system });
  }
  if (m.type === 'stop') void node.stop().then(() => (send({ type: 'stopped' }), process.disconnect()));
});
process.on('disconnect', () => void node.stop().then(() => process.exit(0)));
send({ type: 'ready', ready: false, partitions: [] });
node.start().then(() => send({ type: 'started' }), (err: unknown) => send({ type: 'error', message: String(err) }));
