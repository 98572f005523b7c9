/**
 * Scale-out mode's input and checkpoint adapter: connects to NATS, owns the partitions
 * p mod N = k, feeds their messages to the engine and keeps their snapshots (owned-partition.ts
 * does the per-partition work). Ready when connected and every owned partition has caught up;
 * `stop()` writes final snapshots and releases the partitions. start/stop are idempotent.
 */
import { randomBytes } from 'node:crypto';
import { hostname as osHostname } from 'node:os';
import { jetstreamManager } from '@nats-io/jetstream';
import { connect } from '@nats-io/transport-node';
import type { DeepReadonly } from '../../config/deep-freeze.js';
import type { ScaleOutConfig } from '../../config/scale-out-schema.js';
import type { Engine } from '../../engine/engine.js';
import type { EngineHandle } from '../../engine/engine-handle.js';
import { provisionJetStream } from './jetstream-provisioning.js';
import { OwnedPartition, type PartitionPhase } from './owned-partition.js';
import type { PartitionContext, ScaleOutCounters, ScaleOutLogger } from './partition-context.js';
import { PartitionOwnership } from './partition-ownership.js';
import { PartitionSnapshotStore } from './partition-snapshots.js';
import { dropPartitions, tracksOfPartition } from './partition-tracks.js';
import { ownedPartitions, resolveReplicaIdentity, type ReplicaIdentity } from './replica-identity.js';
import { ScaleOutEvents } from './scale-out-events.js';
import { PartitionRouter } from './subject-routes.js';

type NatsConnection = Awaited<ReturnType<typeof connect>>;

/** What a node is built from. */
export interface ScaleOutNodeOptions {
  readonly config: DeepReadonly<ScaleOutConfig>;
  /** The engine the app runs; a lost partition's tracks leave it through `makeEngine` + swap. */
  readonly handle: EngineHandle;
  /** A fresh engine for the same estimators, sharing the handle's event bus. */
  readonly makeEngine: () => Engine;
  /** Every sensor topic pattern of the estimators (for the partition check and topics). */
  readonly sensorPatterns: readonly string[];
  /** The structural configuration fingerprint snapshots carry. */
  readonly fingerprint: string;
  readonly logger: ScaleOutLogger;
  /** Epoch milliseconds; Date.now by default. */
  readonly now?: () => number;
  /** Host name (for `ordinal: hostname` and the default replica id); os.hostname() by default. */
  readonly hostname?: string;
  /** Tells this process apart in the default replica id; 6 random hex digits by default. */
  readonly instance?: string;
}

/** One partition as the node reports it. */
export interface PartitionStatus {
  readonly partition: number;
  readonly phase: PartitionPhase;
  readonly epoch: number;
  readonly seq: number;
  readonly snapshotSeq: number;
  readonly pending: number;
  readonly caughtUp: boolean;
}

/** Figures for metrics and the readiness probe. */
export interface ScaleOutStats {
  readonly ready: boolean;
  readonly connected: boolean;
  readonly replica: string;
  readonly ordinal: number;
  readonly counters: Readonly<ScaleOutCounters>;
  readonly partitions: readonly PartitionStatus[];
}

const POLL_MS = 200;
const MESSAGES_IN_FLIGHT = 1024;

/** See the module comment. */
export class ScaleOutNode {
  readonly events = new ScaleOutEvents();
  readonly identity: ReplicaIdentity;
  private readonly counters: ScaleOutCounters = { drift: 0, unrouted: 0, snapshots: 0 };
  private readonly now: () => number;
  private readonly connections: NatsConnection[] = [];
  private readonly down = new Set<'data' | 'control'>();
  private parts: OwnedPartition[] = [];
  private timers: NodeJS.Timeout[] = [];
  private stopWatch: (() => void) | null = null;
  private started: Promise<void> | null = null;
  private stopped: Promise<void> | null = null;
  private lastReady = false;
  private pendingDrops = new Set<number>();

  constructor(private readonly options: ScaleOutNodeOptions) {
    this.now = options.now ?? Date.now;
    this.identity = resolveReplicaIdentity(options.config, options.hostname ?? osHostname(), options.instance ?? randomBytes(3).toString('hex'));
  }

  /** Connects, claims the owned partitions and starts consuming them (resolves once all consume). */
  start(): Promise<void> {
    this.started ??= this.run();
    return this.started;
  }

  private async run(): Promise<void> {
    const o = this.options;
    const c = o.config;
    // Two connections: the partitions' messages on one, ownership (renewals, claims, the watch)
    // on the other, so a renewal's reply never queues behind thousands of messages on one socket.
    const options = { servers: [...c.servers], maxReconnectAttempts: -1, reconnectTimeWait: 250 };
    const data = await connect({ ...options, name: `${this.identity.replica}-data` });
    this.connections.push(data);
    const control = await connect({ ...options, name: `${this.identity.replica}-control` });
    this.connections.push(control);
    void this.watchConnection(data, 'data');
    void this.watchConnection(control, 'control');
    // JetStream requests time out after half a lease (1-5 s), not the client's 5 s: a renewal
    // sent while the server is still recovering must fail and be retried before the lease runs out.
    const timeout = Math.min(5000, Math.max(1000, Math.round(c.leaseMs / 2)));
    const jsm = await jetstreamManager(data, { timeout });
    const pieces = await provisionJetStream(jsm, c, await jetstreamManager(control, { timeout }));
    const ownership = new PartitionOwnership(pieces.owners, this.identity, c.leaseMs);
    const owned = ownedPartitions(c.partitions, this.identity);
    const ctx: PartitionContext = {
      config: c,
      // About a thousand messages in flight per replica, however many partitions it owns: more
      // only queue in the socket while the engine works through them.
      batch: Math.max(16, Math.ceil(MESSAGES_IN_FLIGHT / owned.length)),
      js: jsm.jetstream(),
      ownership,
      snapshots: new PartitionSnapshotStore(pieces.snapshots, o.fingerprint),
      router: new PartitionRouter(o.sensorPatterns, c.partitions, c.subjectPrefix),
      handle: o.handle,
      events: this.events,
      log: o.logger,
      now: this.now,
      counters: this.counters,
      stopping: () => this.stopped !== null,
      dropTracks: (p) => this.dropTracks(p),
      changed: () => this.checkReady(),
    };
    this.parts = owned.map((p) => new OwnedPartition(p, ctx));
    const byPartition = new Map(this.parts.map((p) => [p.partition, p]));
    this.stopWatch = ownership.watch((partition, record) => byPartition.get(partition)?.observed(record));
    this.timers.push(setInterval(() => { for (const p of this.parts) void p.renew(); }, c.renewMs));
    this.timers.push(setInterval(() => void this.snapshotRound(false), c.snapshotIntervalS * 1000));
    this.timers.push(setInterval(() => { for (const p of this.parts) void p.pollPending(); }, POLL_MS));
    for (const t of this.timers) t.unref();
    o.logger.info({ replica: this.identity.replica, ordinal: this.identity.ordinal, replicas: this.identity.replicas, partitions: this.parts.length }, 'claiming partitions');
    await Promise.all(this.parts.map((p) => p.start()));
    this.checkReady();
  }

  private get connected(): boolean {
    return this.connections.length === 2 && this.down.size === 0;
  }

  private async watchConnection(nc: NatsConnection, role: 'data' | 'control'): Promise<void> {
    for await (const s of nc.status()) {
      if (s.type === 'disconnect') {
        this.down.add(role);
        for (const p of this.parts) p.disconnected();
        this.checkReady();
      } else if (s.type === 'reconnect') {
        this.down.delete(role);
        // Prove ownership again (the server may have seen a claim meanwhile), then resume.
        for (const p of this.parts) void p.renew().then(() => p.reconnected());
      }
    }
  }

  private dropTracks(partition: number): void {
    if (this.pendingDrops.size === 0) {
      // Several partitions are often lost together (a fencing claim): rebuild the engine once.
      queueMicrotask(() => {
        const dropped = new Set(this.pendingDrops);
        this.pendingDrops.clear();
        const n = dropPartitions(this.options.handle, this.options.makeEngine, dropped, this.options.config.partitions, this.now());
        this.options.logger.info({ partitions: [...dropped], tracks: n }, 'dropped the tracks of lost partitions');
      });
    }
    this.pendingDrops.add(partition);
  }

  /**
   * Snapshots every owned partition with news, one partition per event-loop turn: building a
   * snapshot copies its tracks synchronously (about 1-3 ms per yard track with a full minute of
   * history), so building all at once would hold up messages and renewals for seconds.
   */
  private async snapshotRound(final: boolean): Promise<void> {
    if (this.stopped !== null && !final) return;
    const { handle, config } = this.options;
    const commits: Promise<void>[] = [];
    for (const p of this.parts) {
      await new Promise<void>((resolve) => setImmediate(resolve));
      const snapshot = p.prepareSnapshot(() => tracksOfPartition(handle.engine, p.partition, config.partitions));
      commits.push(p.commitSnapshot(snapshot, final));
    }
    await Promise.all(commits);
  }

  /** True when connected, started, not stopping, and every owned partition consumes and has caught up. */
  ready(): boolean {
    if (!this.connected || this.stopped !== null || this.parts.length === 0) return false;
    return this.parts.every((p) => p.phase === 'consuming' && p.caughtUp);
  }

  private checkReady(): void {
    const ready = this.ready();
    if (ready === this.lastReady) return;
    this.lastReady = ready;
    this.events.emit('ready:changed', { ready });
    this.options.logger.info({ ready }, ready ? 'every owned partition has caught up: ready' : 'not ready');
  }

  /** Figures for metrics and probes. */
  stats(): ScaleOutStats {
    return {
      ready: this.ready(),
      connected: this.connected,
      replica: this.identity.replica,
      ordinal: this.identity.ordinal,
      counters: { ...this.counters },
      partitions: this.parts.map((p) => ({
        partition: p.partition, phase: p.phase, epoch: p.epoch, seq: p.seq, snapshotSeq: p.snapshotSeq, pending: p.pending, caughtUp: p.caughtUp,
      })),
    };
  }

  /** Stops consuming, writes final snapshots, releases the partitions and closes the connection. */
  stop(): Promise<void> {
    this.stopped ??= (async () => {
      this.checkReady();
      while (this.timers.length > 0) clearInterval(this.timers.pop());
      await this.started?.catch(() => undefined);
      await Promise.all(this.parts.map((p) => p.stopIntake()));
      await this.snapshotRound(true);
      for (const p of this.parts) p.markStopped();
      this.stopWatch?.();
      await Promise.all(this.connections.map((nc) => nc.close().catch(() => undefined)));
    })();
    return this.stopped;
  }
}
