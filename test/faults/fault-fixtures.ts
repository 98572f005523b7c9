/**
 * Shared pieces of the fault suites: a small tank-farm estimator whose every reading is
 * accepted exactly once (no gate, history large enough to place any reordered reading), a
 * paced QoS 1 publisher that stalls rather than drops while the broker is away, and a watcher
 * of the daemon's retained status.
 */
import type { MqttClient } from 'mqtt';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import { metricSum, type SoakDaemon } from '../helpers/soak-daemon.js';

/** The demo tanks. */
export const TANKS = ['tank-a', 'tank-b', 'tank-c'] as const;

/** Epoch seconds of the first reading's time stamp: well in the past, so no stamp is `future`. */
export function firstReadingTimeS(): number {
  return Math.floor(Date.now() / 1000) - 600;
}

/**
 * The `tanks` estimator: level as a random walk read by `farm/{tank}/level` JSON readings
 * `{"level_m":…,"t":…,"seq":…}`. The gate is off and the history holds an hour, so a reading is
 * rejected only as a duplicate (same tank and time) and never for its value or its order.
 */
export function tanksEstimator(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    name: 'tanks',
    model: { type: 'random-walk', states: ['level'], q: 1e-4 },
    filter: { kind: 'kf' },
    prior: { sigma: { level: 10 } },
    gate: { probability: 'off' },
    history: { horizonS: 3600, maxEntries: 8192 },
    futureToleranceS: 60,
    entities: { max: 100, idleEvictS: 3600 },
    sensors: {
      level: {
        topic: 'farm/{tank}/level',
        qos: 1,
        expectedPeriodS: 1,
        decode: { format: 'json', values: ['level_m'], time: 't', sequence: 'seq' },
        measurement: { type: 'linear', reads: { level: 1 }, sigma: 0.02 },
      },
    },
    ...overrides,
  };
}

/** A daemon config against `brokerUrl` with the tanks estimator (protocol 5, info logs). */
export function tanksConfig(brokerUrl: string, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    broker: { url: brokerUrl, protocolVersion: 5 },
    checkpoint: { enabled: false },
    log: { level: 'info' },
    estimators: [tanksEstimator()],
    ...extra,
  };
}

/** Reading `seq` (0-based): tanks in turn, one millisecond apart per tank. */
export function reading(seq: number, t0S: number): { topic: string; payload: string } {
  const tank = TANKS[seq % TANKS.length]!;
  const k = Math.floor(seq / TANKS.length);
  const payload = JSON.stringify({ level_m: 2 + 0.001 * (k % 100), t: t0S + k / 1000, seq });
  return { topic: `farm/${tank}/level`, payload };
}

/** The daemon's counters for one estimator, read from /metrics. */
export interface ReadingCounts {
  readonly received: number;
  readonly accepted: number;
  readonly rejected: number;
  readonly duplicates: number;
}

/** Reads the received, accepted and rejected counters of `estimator` from the daemon's /metrics. */
export async function readingCounts(daemon: SoakDaemon, estimator = 'tanks'): Promise<ReadingCounts> {
  const m = await daemon.metrics();
  return {
    received: metricSum(m, 'statecast_measurements_received_total', { estimator }),
    accepted: metricSum(m, 'statecast_measurements_accepted_total', { estimator }),
    rejected: metricSum(m, 'statecast_measurements_rejected_total', { estimator }),
    duplicates: metricSum(m, 'statecast_measurements_rejected_total', { estimator, reason: 'duplicate' }),
  };
}

/** Lets a publisher loop pause between readings: `close()`, then `open()` to go on. */
export class Valve {
  private opened: Promise<void> = Promise.resolve();
  private release: () => void = () => {};

  /** Publishing stops before the next reading. */
  close(): void {
    this.opened = new Promise((resolve) => (this.release = resolve));
  }

  /** Publishing goes on. */
  open(): void {
    this.release();
  }

  /** Resolves while (or once) the valve is open. */
  passed(): Promise<void> {
    return this.opened;
  }
}

/** Options of publishReadings. */
export interface PublishReadingsOptions {
  /** Readings per pacing period (default 50). */
  readonly chunk?: number;
  /** Pacing period in ms (default 50). */
  readonly periodMs?: number;
  /** Most unacknowledged readings at once (default 200). */
  readonly maxOutstanding?: number;
  /** Sees the running count of acknowledged readings. */
  readonly onAcknowledged?: (acked: number) => void;
  /** Sees the running count of readings handed to the client. */
  readonly onIssued?: (issued: number) => void;
  /** Awaited before each reading, so a test can pause the stream. */
  readonly valve?: Valve;
}

/**
 * Publishes readings 0..count-1 at QoS 1, at most `maxOutstanding` unacknowledged, in chunks of
 * `chunk` every `periodMs` (pacing the load). A publish made while the broker is away stays
 * pending in the client's session store, so the loop stalls instead of dropping.
 */
export async function publishReadings(client: MqttClient, count: number, t0S: number, options: PublishReadingsOptions = {}): Promise<void> {
  const chunk = options.chunk ?? 50;
  const periodMs = options.periodMs ?? 50;
  const maxOutstanding = options.maxOutstanding ?? 200;
  let acked = 0;
  const pending = new Set<Promise<unknown>>();
  for (let seq = 0; seq < count; seq += chunk) {
    const started = Date.now();
    for (let s = seq; s < Math.min(count, seq + chunk); s++) {
      while (pending.size >= maxOutstanding) await Promise.race(pending);
      if (options.valve !== undefined) await options.valve.passed();
      const { topic, payload } = reading(s, t0S);
      options.onIssued?.(s + 1);
      const p: Promise<unknown> = client.publishAsync(topic, payload, { qos: 1 }).then(() => {
        pending.delete(p);
        acked += 1;
        options.onAcknowledged?.(acked);
      });
      pending.add(p);
    }
    const restMs = periodMs - (Date.now() - started);
    if (restMs > 0) await new Promise((resolve) => setTimeout(resolve, restMs));
  }
  await Promise.all(pending);
}

/**
 * Resolves once the daemon's retained status on `brokerUrl` says online. The daemon subscribes
 * before it publishes that status on the same connection, and the broker handles one client's
 * packets in order, so an online status means the daemon's subscriptions are in place.
 */
export async function daemonOnline(brokerUrl: string, statusTopic = 'statecast/status'): Promise<void> {
  const watcher = await connectRawClient(brokerUrl, { protocolVersion: 5 });
  try {
    await new Promise<void>((resolve) => {
      watcher.on('message', (topic, payload) => {
        if (topic === statusTopic && payload.toString().includes('"online"')) resolve();
      });
      void watcher.subscribeAsync(statusTopic, { qos: 1 });
    });
  } finally {
    await endRawClient(watcher);
  }
}
