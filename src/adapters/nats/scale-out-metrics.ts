/**
 * Scale-out mode's Prometheus metrics, read from the node at scrape time. Registered only in
 * scale-out mode, beside the daemon's own (daemon-metric-names.ts lists those). Cardinality:
 * `phase` is a closed set; `partition` takes at most scaleOut.partitions / replicas values.
 */
import { Counter, Gauge, type Registry } from 'prom-client';
import type { ScaleOutNode } from './scale-out-node.js';

/** The names registered here. */
export const SCALE_OUT_METRIC_NAMES = [
  'statecast_scale_out_ready',
  'statecast_partitions',
  'statecast_partition_pending',
  'statecast_partition_sequence',
  'statecast_partition_config_drift_total',
  'statecast_partition_unrouted_total',
  'statecast_partition_snapshots_total',
] as const;

const PHASES = ['claiming', 'handover', 'restoring', 'consuming', 'suspended', 'lost', 'stopped'] as const;

/** Registers the metrics of `node` on `registry` (once per registry). */
export function registerScaleOutMetrics(registry: Registry, node: ScaleOutNode): void {
  const registers = [registry];
  const total = (name: string, help: string, read: () => number): void => {
    new Counter({
      name, help, registers,
      collect() {
        this.reset();
        this.inc(Math.max(0, read()));
      },
    });
  };
  new Gauge({
    name: 'statecast_scale_out_ready', help: '1 when connected and every owned partition has caught up, else 0.', registers,
    collect() {
      this.set(node.ready() ? 1 : 0);
    },
  });
  new Gauge({
    name: 'statecast_partitions', help: 'Partitions this replica owns, by phase (lost: another replica claimed it).', labelNames: ['phase'], registers,
    collect() {
      this.reset();
      const partitions = node.stats().partitions;
      for (const phase of PHASES) this.set({ phase }, partitions.filter((p) => p.phase === phase).length);
    },
  });
  new Gauge({
    name: 'statecast_partition_pending', help: 'Messages waiting in the stream for an owned partition (last known; -1 unknown).', labelNames: ['partition'], registers,
    collect() {
      this.reset();
      for (const p of node.stats().partitions) this.set({ partition: String(p.partition) }, Number.isFinite(p.pending) ? p.pending : -1);
    },
  });
  new Gauge({
    name: 'statecast_partition_sequence', help: 'Last stream sequence handled per owned partition.', labelNames: ['partition'], registers,
    collect() {
      this.reset();
      for (const p of node.stats().partitions) this.set({ partition: String(p.partition) }, p.seq);
    },
  });
  total('statecast_partition_config_drift_total',
    'Messages whose partition differs from the one their entity tokens hash to: the broker mappings and the daemon disagree (config drift).',
    () => node.stats().counters.drift);
  total('statecast_partition_unrouted_total', 'Partition messages no sensor topic pattern matches.', () => node.stats().counters.unrouted);
  total('statecast_partition_snapshots_total', 'Partition snapshots committed.', () => node.stats().counters.snapshots);
}
