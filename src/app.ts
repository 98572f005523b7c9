/**
 * The composition root: builds the engine and every adapter from one validated config and
 * runs their lifecycle. Start order is sinks before sources (HTTP/metrics, then the broker
 * connection, then the simulator); stop runs in reverse, ending with a checkpoint.
 */
import { hostname } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Registry } from 'prom-client';
import type { Logger } from 'pino';
import type { Config } from './config/config-schema.js';
import type { DeepReadonly } from './config/deep-freeze.js';
import { Engine, type EstimatePublisher } from './engine/engine.js';
import { EngineEvents } from './engine/engine-events.js';
import { EngineHandle } from './engine/engine-handle.js';
import { startEmbeddedBroker, type EmbeddedBroker } from './adapters/broker/embedded-broker.js';
import { createMqttConnection, type MqttConnection } from './adapters/mqtt/mqtt-connection.js';
import { publishOptionsFor } from './adapters/mqtt/publish-options.js';
import { createAdminHttpServer } from './adapters/http/admin-http-server.js';
import { EstimateStreamServer } from './adapters/ws/estimate-stream-server.js';
import { createDaemonMetrics, type DaemonMetrics } from './adapters/metrics/daemon-metrics.js';
import { CheckpointKeeper } from './daemon/checkpoint-keeper.js';
import { DemoSimulator } from './daemon/demo-simulator.js';
import { wireEngineLogging } from './daemon/engine-logging.js';
import { DASHBOARD_VENDOR_ASSETS } from './dashboard/vendor-assets.js';
import { createScaleOutMode } from './adapters/nats/scale-out-mode.js';

/** What the shell gives the app (the CLI passes real ones; tests may pass fakes). */
export interface AppDeps {
  readonly logger: Logger;
  /** Epoch milliseconds. */
  readonly now?: () => number;
}

/** Where a started daemon can be reached. */
export interface StartedApp {
  readonly httpUrl: string;
  readonly wsUrl: string;
  readonly brokerUrl: string;
  readonly embeddedBroker: boolean;
}

/** A built daemon; see the module comment. */
export interface App {
  readonly handle: EngineHandle;
  start(): Promise<StartedApp>;
  /** Applies a new validated config without dropping tracks whose estimator can take them. */
  reload(config: DeepReadonly<Config>): Promise<void>;
  /** Stops everything within deadlineMs, writing a final checkpoint. Idempotent. */
  stop(deadlineMs?: number): Promise<void>;
  /** True when the config is loaded and the broker connection is up. */
  ready(): boolean;
}

/** Folder of the dashboard's static files, shipped beside the code. */
export const DASHBOARD_DIR = fileURLToPath(new URL('./dashboard/', import.meta.url));

/** Slices of the one-second health interval (the health tick runs every 1000 / HEALTH_SLICES ms). */
const HEALTH_SLICES = 10;

/** Builds (but does not start) the daemon for a validated config. */
export function buildApp(initial: DeepReadonly<Config>, deps: AppDeps): App {
  const log = deps.logger;
  const now = deps.now ?? Date.now;
  let config = initial;
  const events = new EngineEvents();
  let connection: MqttConnection | null = null;
  const publisher: EstimatePublisher = {
    publish: (topic, payload, qos, retain) => connection?.publish(topic, payload, publishOptionsFor(qos, retain)),
  };
  const handle = new EngineHandle(new Engine(config.estimators, publisher, events));
  const registry = new Registry();
  const timers: NodeJS.Timeout[] = [];
  let broker: EmbeddedBroker | null = null;
  let http: ReturnType<typeof createAdminHttpServer> | null = null;
  let stream: EstimateStreamServer | null = null;
  let metrics: DaemonMetrics | null = null;
  let simulator: DemoSimulator | null = null;
  let brokerUrl = '';
  let stopping: Promise<void> | null = null;
  const checkpoints = new CheckpointKeeper(config, handle, log, now);
  // Scale-out mode: input from the partition stream, per-partition snapshots instead of the file.
  const scaleOut = createScaleOutMode({ config, current: () => config, handle, publisher, events, registry, logger: log, now });
  const unwireLogs = wireEngineLogging(events, log);

  const onMessage = (topic: string, payload: Buffer, arrivalMs: number): void => {
    handle.engine.handleMessage(topic, payload, arrivalMs);
  };

  const connect = async (): Promise<void> => {
    const b = config.broker;
    const resolved = broker === null ? { ...b, url: brokerUrl } : { ...b, url: broker.url, protocolVersion: 4 as const };
    connection = createMqttConnection({
      broker: resolved,
      clientId: b.clientId ?? `statecast-${hostname()}`,
      logger: log,
      subscriptions: scaleOut === null ? handle.engine.subscriptions() : [],
      onMessage,
      waitForConnect: false,
    });
    connection.on('connect', (info) => log.info({ sessionPresent: info.sessionPresent }, 'connected to the broker'));
    connection.on('disconnect', () => log.warn({}, 'lost the broker connection; reconnecting'));
    await connection.start();
  };

  const startTimers = (): void => {
    // One tenth of the tracks every 100 ms: each is still evaluated once a second, and the loop
    // is never held for a whole evaluation (~80 ms at 10,000 tracks).
    let healthSlice = 0;
    timers.push(setInterval(() => {
      handle.engine.evaluateHealthSlice(now(), healthSlice, HEALTH_SLICES);
      healthSlice = (healthSlice + 1) % HEALTH_SLICES;
    }, 1000 / HEALTH_SLICES));
    timers.push(setInterval(() => handle.engine.evictIdle(now()), 30_000));
    for (const e of config.estimators) {
      if (e.publish.mode !== 'fixed-rate' || e.publish.rateHz === undefined) continue;
      timers.push(setInterval(() => handle.engine.publishPredictions(e.name, now()), 1000 / e.publish.rateHz));
    }
    for (const t of timers) t.unref();
  };

  const stopTimers = (): void => {
    while (timers.length > 0) clearInterval(timers.pop());
  };

  return {
    handle,
    ready: () => connection?.connected === true && stopping === null && (scaleOut?.ready() ?? true),

    async start(): Promise<StartedApp> {
      const restored = scaleOut === null ? await checkpoints.restore() : 0;
      if (restored > 0) log.info({ tracks: restored }, 'restored tracks from the checkpoint');
      if (config.broker.url === undefined) {
        broker = await startEmbeddedBroker({ host: config.embeddedBroker.host, port: config.embeddedBroker.port });
        brokerUrl = broker.url;
        log.info({ url: broker.url }, 'started the embedded broker (MQTT 3.1.1)');
      } else {
        brokerUrl = config.broker.url;
      }
      http = createAdminHttpServer({
        host: config.http.host,
        port: config.http.port,
        view: handle,
        registry,
        ...(config.auth.token === undefined ? {} : { token: config.auth.token }),
        readiness: () => ({ ready: this.ready(), checks: { config: true, broker: connection?.connected === true, ...(scaleOut === null ? {} : { partitions: scaleOut.ready() }) } }),
        staticDir: DASHBOARD_DIR,
        extraFiles: DASHBOARD_VENDOR_ASSETS,
        logger: log,
      });
      stream = new EstimateStreamServer({ httpServer: http.server, view: handle }, {
        path: config.http.websocket.path,
        maxQueuedPerClient: config.http.websocket.maxQueuedPerClient,
        maxPayloadBytes: config.http.websocket.maxPayloadBytes,
        allowedOrigins: config.http.websocket.allowedOrigins,
        ...(config.auth.token === undefined ? {} : { token: config.auth.token }),
        onError: (error) => log.warn({ err: error }, 'WebSocket client error'),
      });
      const s = stream;
      metrics = createDaemonMetrics({
        registry,
        view: handle,
        brokerConnected: () => connection?.connected === true,
        wsClients: () => s.stats().clients,
        wsDroppedTotal: () => s.stats().dropped,
        mqttDroppedTotal: () => connection?.droppedCount ?? 0,
        maxEntitiesPerEstimator: config.http.metrics.maxEntitiesPerEstimator,
      });
      const { url } = await http.start();
      stream.start();
      metrics.start();
      await connect();
      await scaleOut?.start();
      startTimers();
      if (scaleOut === null) checkpoints.startPeriodic();
      if (config.simulator.enabled) {
        simulator = new DemoSimulator(config.simulator, brokerUrl, broker === null ? config.broker.protocolVersion : 4, log, now);
        await simulator.start();
      }
      const wsUrl = url.replace(/^http/, 'ws') + config.http.websocket.path.replace(/^\//, '');
      return { httpUrl: url, wsUrl, brokerUrl, embeddedBroker: broker !== null };
    },

    async reload(next: DeepReadonly<Config>): Promise<void> {
      const engine = new Engine(next.estimators, publisher, events);
      const moved = checkpoints.transfer(handle.engine, engine);
      const oldSubscriptions = JSON.stringify(handle.engine.subscriptions());
      handle.swap(engine);
      config = next;
      checkpoints.setConfig(next);
      stopTimers();
      startTimers();
      log.info({ tracksKept: moved.kept, tracksDropped: moved.dropped }, 'configuration reloaded');
      if (JSON.stringify(engine.subscriptions()) !== oldSubscriptions && connection !== null) {
        // New topic filters need a new session subscription set; reconnecting keeps it simple.
        const old = connection;
        connection = null;
        await old.stop({ finalStatus: false });
        await connect();
      }
    },

    stop(deadlineMs = 10_000): Promise<void> {
      stopping ??= (async () => {
        const deadline = new Promise<void>((resolve) => setTimeout(resolve, deadlineMs).unref());
        const work = (async () => {
          simulator?.stop();
          stopTimers();
          checkpoints.stopPeriodic();
          await scaleOut?.stop(); // the source first: final partition snapshots, then release
          await connection?.stop({ finalStatus: true });
          if (scaleOut === null) await checkpoints.saveNow('shutdown');
          metrics?.stop();
          await stream?.stop();
          await http?.stop();
          await broker?.stop();
          unwireLogs();
        })();
        await Promise.race([work, deadline]);
      })();
      return stopping;
    },
  };
}
