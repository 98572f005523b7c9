/**
 * The daemon's Prometheus metrics on one injected prom-client Registry (never the global one).
 * Counters and the latency histogram follow the engine's events; gauges are read from the engine
 * view, the broker and the WebSocket feed at scrape time. Names are listed in
 * daemon-metric-names.ts, with the label cardinality.
 */
import { collectDefaultMetrics, Counter, Gauge, type Registry } from 'prom-client';
import { REJECTION_REASONS } from '../../estimation/rejection-reason.js';
import { DECODE_REJECTIONS } from '../../engine/decode-rejection.js';
import type { EngineEventMap } from '../../engine/engine-events.js';
import type { EngineView } from '../../engine/engine-view.js';
import { HEALTH_REASONS } from '../../engine/health-change.js';
import { createCellCounter } from './cell-counter.js';
import { CellHistogram } from './cell-histogram.js';
import { registerEventLoopLagGauge } from './event-loop-lag-gauge.js';
import { registerTrackGauges } from './track-gauges.js';

export { DAEMON_METRIC_NAMES, DAEMON_HISTOGRAM_NAMES, isDaemonSeriesName, type DaemonMetricName } from './daemon-metric-names.js';

/** Every `reason` label of `statecast_measurements_rejected_total`: a closed set. */
export const MEASUREMENT_REJECTION_LABELS: readonly string[] = [
  ...REJECTION_REASONS,
  ...DECODE_REJECTIONS,
  'no-route',
  'entity-cap',
  'bad-topic',
];

/**
 * Buckets of `statecast_processing_latency_seconds`, 1 ms to 60 s: latency runs from event time
 * to processing, and late data (a sensor that buffers for a minute) is normal, not an outlier.
 */
export const PROCESSING_LATENCY_BUCKETS_S: readonly number[] = [
  0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30, 60,
];

/** Options of createDaemonMetrics. */
export interface DaemonMetricsOptions {
  /** The registry every metric goes on (the composition root owns it). */
  readonly registry: Registry;
  /** The engine, read at scrape time and followed through `view.events`. */
  readonly view: EngineView;
  /** Whether the MQTT client is connected now (`statecast_broker_connected`). */
  readonly brokerConnected: () => boolean;
  /** WebSocket clients connected now; `statecast_ws_clients` is registered only when given. */
  readonly wsClients?: () => number;
  /** Messages dropped for slow WebSocket clients since start; `statecast_ws_dropped_total` only when given. */
  readonly wsDroppedTotal?: () => number;
  /** Outgoing MQTT messages dropped by the bounded publish queue since start; `statecast_mqtt_dropped_total` only when given. */
  readonly mqttDroppedTotal?: () => number;
  /**
   * Entities per estimator that get per-entity series (default 1,000, as `http.metrics`): failed,
   * then degraded, then by name; the rest are counted in `statecast_metrics_entities_omitted`.
   */
  readonly maxEntitiesPerEstimator?: number;
  /** Also register prom-client's process metrics with prefix `statecast_` (default true). */
  readonly defaultMetrics?: boolean;
  /** Sampling period of the event-loop delay monitor in ms (default 10). */
  readonly eventLoopResolutionMs?: number;
}

/** The metrics adapter's lifecycle: metrics exist from creation, events are followed while started. */
export interface DaemonMetrics {
  /** Subscribes to the engine's events and starts the event-loop sampler; idempotent. */
  start(): void;
  /** Unsubscribes and stops the sampler; idempotent. Registered metrics stay on the registry. */
  stop(): void;
}

/** The default of `maxEntitiesPerEstimator` (the config's `http.metrics.maxEntitiesPerEstimator`). */
export const DEFAULT_MAX_ENTITIES_PER_ESTIMATOR = 1000;

const REJECTION_LABEL_SET: ReadonlySet<string> = new Set(MEASUREMENT_REJECTION_LABELS);
const HEALTH_REASON_SET: ReadonlySet<string> = new Set(HEALTH_REASONS);

/**
 * Registers the daemon's metrics on `options.registry`. Throws if they are already registered
 * there (prom-client refuses duplicate names), which only a wiring mistake can cause.
 */
export function createDaemonMetrics(options: DaemonMetricsOptions): DaemonMetrics {
  const { registry, view } = options;
  const registers = [registry];
  if (options.defaultMetrics !== false) collectDefaultMetrics({ register: registry, prefix: 'statecast_' });

  // Counted into cells and handed to prom-client at scrape (see label-cells.ts): the
  // per-measurement cost is a few Map lookups, not a label hash per metric.
  const received = createCellCounter({
    name: 'statecast_measurements_received_total',
    help: 'Measurements received (accepted plus rejected), by estimator and sensor.',
    labelNames: ['estimator', 'sensor'],
    registry,
  });
  const accepted = createCellCounter({
    name: 'statecast_measurements_accepted_total',
    help: 'Measurements used by a filter; late="true" when one arrived out of order and was replayed.',
    labelNames: ['estimator', 'sensor', 'late'],
    registry,
  });
  const rejected = createCellCounter({
    name: 'statecast_measurements_rejected_total',
    help: 'Measurements not used, by reason (gate, too-late, decode failures, no-route, entity-cap, ...).',
    labelNames: ['estimator', 'sensor', 'reason'],
    registry,
  });
  const published = createCellCounter({
    name: 'statecast_estimates_published_total',
    help: 'Estimates produced, by estimator and kind (filtered, predicted, smoothed).',
    labelNames: ['estimator', 'kind'],
    registry,
  });
  const transitions = new Counter({
    name: 'statecast_health_transitions_total',
    help: 'Health changes of tracks and sensors, by new state and first reason ("none" on recovery).',
    labelNames: ['estimator', 'to', 'reason'],
    registers,
  });
  const latency = new CellHistogram({
    name: 'statecast_processing_latency_seconds',
    help: 'Seconds from a measurement\'s event time to its processing (late data lands in the upper buckets).',
    labelNames: ['estimator'],
    buckets: PROCESSING_LATENCY_BUCKETS_S,
    registry,
  }).cells;

  registerTrackGauges(registry, view, options.maxEntitiesPerEstimator ?? DEFAULT_MAX_ENTITIES_PER_ESTIMATOR);
  const loopLag = registerEventLoopLagGauge(registry, options.eventLoopResolutionMs);
  registerConnectionGauges(options);

  const handlers: { [K in keyof EngineEventMap]?: (e: EngineEventMap[K]) => void } = {
    'measurement:accepted': (e) => {
      received.cell(e.estimator, e.sensor).value += 1;
      accepted.cell(e.estimator, e.sensor, e.late ? 'true' : 'false').value += 1;
      // A stamp slightly ahead of this host's clock gives a negative latency: that is clock
      // offset, not time travel, and a histogram sum must not shrink.
      if (Number.isFinite(e.latencyS)) latency.cell(e.estimator).observe(Math.max(0, e.latencyS));
    },
    'measurement:rejected': (e) => {
      received.cell(e.estimator, e.sensor).value += 1;
      // The type already closes the set; the check keeps the label bounded even if a caller
      // outside the type system passes something else.
      const reason = REJECTION_LABEL_SET.has(e.reason) ? e.reason : 'other';
      rejected.cell(e.estimator, e.sensor, reason).value += 1;
    },
    'estimate': (e) => {
      published.cell(e.estimator, e.kind).value += 1;
    },
    'health:changed': (e) => {
      const first = e.reasons[0];
      const reason = first === undefined ? 'none' : HEALTH_REASON_SET.has(first) ? first : 'other';
      transitions.inc({ estimator: e.estimator, to: e.to, reason });
    },
  };

  let unsubscribers: (() => void)[] | null = null;
  return {
    start() {
      if (unsubscribers !== null) return;
      unsubscribers = [];
      for (const name of Object.keys(handlers) as (keyof EngineEventMap)[]) {
        const handler = handlers[name] as ((e: EngineEventMap[typeof name]) => void) | undefined;
        if (handler !== undefined) unsubscribers.push(view.events.on(name, handler));
      }
      loopLag.start();
    },
    stop() {
      if (unsubscribers === null) return;
      for (const off of unsubscribers) off();
      unsubscribers = null;
      loopLag.stop();
    },
  };
}

function registerConnectionGauges(options: DaemonMetricsOptions): void {
  const registers = [options.registry];
  const { brokerConnected, wsClients, wsDroppedTotal, mqttDroppedTotal } = options;
  if (mqttDroppedTotal !== undefined) {
    new Counter({
      name: 'statecast_mqtt_dropped_total',
      help: 'Outgoing MQTT messages (estimates, health) dropped because the bounded publish queue was full while the broker was slow or away.',
      registers,
      collect() {
        this.reset();
        this.inc(Math.max(0, mqttDroppedTotal()));
      },
    });
  }
  new Gauge({
    name: 'statecast_broker_connected',
    help: '1 while the MQTT client is connected to the broker, else 0.',
    registers,
    collect() {
      this.set(brokerConnected() ? 1 : 0);
    },
  });
  if (wsClients !== undefined) {
    new Gauge({
      name: 'statecast_ws_clients',
      help: 'WebSocket clients connected now.',
      registers,
      collect() {
        this.set(wsClients());
      },
    });
  }
  if (wsDroppedTotal !== undefined) {
    new Counter({
      name: 'statecast_ws_dropped_total',
      help: 'Messages dropped because a WebSocket client fell too far behind.',
      registers,
      collect() {
        // The feed keeps the running total; a counter has no set(), so reset and add it.
        this.reset();
        this.inc(Math.max(0, wsDroppedTotal()));
      },
    });
  }
}
