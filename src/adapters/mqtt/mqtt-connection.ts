/**
 * The daemon's MQTT connection: telemetry in, estimates and status out.
 *
 * Delivery: the session is persistent (see `mqttClientOptions`), and a QoS 1 message is
 * acknowledged to the broker only after `onMessage` has returned, because mqtt.js sends the
 * PUBACK after its synchronous 'message' handlers ran. `onMessage` must therefore be synchronous
 * and finish processing (or hand the message to an in-process queue) before returning; a crash
 * before it returns means the broker delivers the message again to the resumed session.
 *
 * Status: a retained `{"status":"online","since":ISO}` on every connect; a retained QoS 1 last
 * will `{"status":"offline"}` the broker publishes when the connection is lost without a
 * DISCONNECT; and the same offline payload published by `stop({ finalStatus: true })`.
 */
import { EventEmitter } from 'node:events';
import mqtt, { type IConnackPacket, type ISubscriptionMap, type MqttClient } from 'mqtt';
import { connackRefusal } from './connack-refusal.js';
import { mqttClientOptions, OFFLINE_STATUS, readTlsMaterial, redactBrokerUrl } from './mqtt-client-options.js';
import type { MqttConnectionOptions, MqttPublishOptions } from './mqtt-connection-options.js';
import { createClientSender } from './client-sender.js';
import { reconnectDelayMs } from './reconnect-backoff.js';

export type { MqttConnectionOptions, MqttLogger, MqttPublishOptions, MqttSubscription } from './mqtt-connection-options.js';

const STOPPED_BEFORE_CONNECT = 'the MQTT connection was stopped before it connected';

/** Events of an {@link MqttConnection}. */
export interface MqttConnectionEvents {
  connect: [info: { sessionPresent: boolean }];
  /** The broker granted the subscriptions (first connect, or a connect without a session). */
  subscribed: [];
  disconnect: [];
  error: [error: Error];
}

/** A running or stopped connection; see {@link createMqttConnection}. */
export interface MqttConnection {
  /** Connects. Idempotent. Rejects when waiting and the broker refuses the CONNECT. */
  start(): Promise<void>;
  /**
   * Disconnects for good: flushes outgoing messages (up to `stopTimeoutMs`), publishes the
   * retained offline status when `finalStatus` (default true), then sends DISCONNECT. Without a
   * final status the retained status is left as it was. Idempotent.
   */
  stop(options?: { finalStatus: boolean }): Promise<void>;
  /**
   * Sends (within the write batch) or queues a message; never throws. The oldest queued message
   * is dropped (and counted) past `maxQueuedOutgoing` messages or `maxQueuedOutgoingBytes`.
   */
  publish(topic: string, payload: string | Buffer, options?: MqttPublishOptions): void;
  readonly connected: boolean;
  /** Outgoing messages dropped because the bounded queue was full or stop() gave up on them. */
  readonly droppedCount: number;
  on<E extends keyof MqttConnectionEvents>(event: E, listener: (...args: MqttConnectionEvents[E]) => void): this;
  once<E extends keyof MqttConnectionEvents>(event: E, listener: (...args: MqttConnectionEvents[E]) => void): this;
  off<E extends keyof MqttConnectionEvents>(event: E, listener: (...args: MqttConnectionEvents[E]) => void): this;
}

/**
 * Creates the connection (not yet started). Reconnects after a loss with exponential backoff
 * between `broker.reconnectMinMs` and `broker.reconnectMaxMs`, and subscribes on the first
 * connect and on every connect whose CONNACK says the session was not present.
 */
export function createMqttConnection(options: MqttConnectionOptions): MqttConnection {
  const { broker, clientId, logger } = options;
  const statusTopic = options.statusTopic ?? broker.statusTopic;
  const now = options.now ?? Date.now;
  const stopTimeoutMs = options.stopTimeoutMs ?? 5000;
  const events = new EventEmitter<MqttConnectionEvents>();
  let client: MqttClient | undefined;
  let starting: Promise<void> | undefined;
  let stopping: Promise<void> | undefined;
  let abortFirstConnect: ((err: Error) => void) | undefined;
  let attempt = 0;
  let subscribed = false;
  let wasConnected = false;

  const { queue, batch, connected: sendWaiting } = createClientSender({
    broker,
    options,
    client: () => client,
    // While stopping, only the flush in stop() may still send what was queued before it.
    open: () => stopping === undefined || draining,
  });
  let draining = false;
  const emitError = (err: Error): void => {
    if (events.listenerCount('error') > 0) events.emit('error', err);
  };

  const subscribe = (c: MqttClient): void => {
    if (options.subscriptions.length === 0) return;
    const map: ISubscriptionMap = {};
    // Under MQTT 5, rh 1 sends retained messages only for a subscription that did not exist yet.
    for (const s of options.subscriptions) map[s.filter] = broker.protocolVersion === 5 ? { qos: s.qos, rh: 1 } : { qos: s.qos };
    c.subscribe(map, (err, _granted, suback) => {
      if (err === null) {
        subscribed = true;
        events.emit('subscribed');
        return;
      }
      // A SUBACK with failure codes is a refusal; no SUBACK means the connection went away.
      const codes = (suback?.granted ?? []) as number[];
      if (codes.length === 0) {
        logger.warn({ err: err.message }, 'subscribing failed; retrying on the next connect');
        return;
      }
      subscribed = true;
      const refused = options.subscriptions.filter((_, i) => ((codes[i] ?? 0) & 0x80) !== 0).map((s) => s.filter);
      logger.error({ filters: refused }, 'the broker refused these subscriptions (not authorised or invalid)');
      emitError(new Error(`the MQTT broker refused the subscriptions ${refused.join(', ')}`, { cause: err }));
    });
  };

  const wire = (c: MqttClient): void => {
    c.on('message', (topic, payload) => {
      const arrivalMs = now();
      try {
        options.onMessage(topic, payload, arrivalMs);
      } catch (err) {
        // Acknowledged anyway: a message that throws would throw again on every redelivery.
        logger.error({ topic, err: (err as Error).message }, 'the message handler threw; message dropped');
      }
    });
    c.on('connect', (connack: IConnackPacket) => {
      attempt = 0;
      c.options.reconnectPeriod = broker.reconnectMinMs;
      wasConnected = true;
      const sessionPresent = connack.sessionPresent;
      logger.info({ url: redactBrokerUrl(broker.url), clientId, sessionPresent }, 'connected to the MQTT broker');
      if (!subscribed || !sessionPresent) subscribe(c);
      const online = JSON.stringify({ status: 'online', since: new Date(now()).toISOString() });
      c.publish(statusTopic, online, { qos: 1, retain: true });
      sendWaiting(c);
      events.emit('connect', { sessionPresent });
    });
    // mqtt.js schedules the next attempt with the current reconnectPeriod; raise it as each attempt begins.
    c.on('reconnect', () => {
      attempt += 1;
      c.options.reconnectPeriod = reconnectDelayMs(attempt, broker.reconnectMinMs, broker.reconnectMaxMs, options.random);
    });
    c.prependListener('close', () => {
      batch.flush();
      if (stopping !== undefined) return;
      if (wasConnected) {
        wasConnected = false;
        logger.warn({ url: redactBrokerUrl(broker.url) }, 'lost the MQTT broker connection');
        events.emit('disconnect');
      }
      logger.debug({ attempt, delayMs: c.options.reconnectPeriod }, 'reconnect scheduled');
    });
    c.on('error', (err: Error & { code?: unknown }) => {
      if (typeof err.code === 'number') {
        const refusal = connackRefusal(broker, err);
        logger.error({ code: err.code }, refusal.message);
        abortFirstConnect?.(refusal);
        emitError(refusal);
      } else {
        // Repeated failures while the broker is away are expected; say it loudly only once.
        const fields = { url: redactBrokerUrl(broker.url), err: err.message };
        if (attempt === 0) logger.warn(fields, 'MQTT connection error');
        else logger.debug(fields, 'MQTT connection error');
        emitError(err);
      }
    });
  };

  const connection: MqttConnection = {
    start() {
      starting ??= (async () => {
        const tls = await readTlsMaterial(broker.tls);
        if (broker.tls?.verifyCertificate === false) {
          logger.warn({ url: redactBrokerUrl(broker.url) }, 'broker.tls.verifyCertificate is false: the broker certificate is not checked');
        }
        if (stopping !== undefined) {
          if (options.waitForConnect === false) return;
          throw new Error(STOPPED_BEFORE_CONNECT);
        }
        const c = (options.connectClient ?? mqtt.connect)(broker.url, mqttClientOptions({ broker, clientId, statusTopic, tls }));
        client = c;
        wire(c);
        logger.info({ url: redactBrokerUrl(broker.url), clientId, protocolVersion: broker.protocolVersion }, 'connecting to the MQTT broker');
        if (options.waitForConnect === false) return;
        try {
          await new Promise<void>((resolve, reject) => {
            abortFirstConnect = reject;
            c.once('connect', () => resolve());
          });
        } catch (err) {
          // Do not leave a client retrying behind a start() that failed.
          abortFirstConnect = undefined;
          await connection.stop({ finalStatus: false });
          throw err;
        } finally {
          abortFirstConnect = undefined;
        }
      })();
      return starting;
    },
    stop(stopOptions = { finalStatus: true }) {
      stopping ??= (async () => {
        abortFirstConnect?.(new Error(STOPPED_BEFORE_CONNECT));
        batch.flush();
        const c = client;
        if (c === undefined) return;
        if (c.connected) {
          draining = true;
          queue.pump();
          const flushed = queue.whenIdle().then(async () => {
            draining = false;
            // The estimates still in the batch go before the offline status.
            batch.flush();
            if (stopOptions.finalStatus) await publishAsync(c, statusTopic, OFFLINE_STATUS);
          });
          await withTimeout(flushed, stopTimeoutMs);
          draining = false;
        }
        batch.close();
        const abandoned = queue.clear();
        if (abandoned > 0) logger.warn({ dropped: abandoned }, 'stopped with outgoing messages unsent');
        // A graceful end waits for unacknowledged publishes, which never come if the broker is gone.
        const force = !c.connected || Object.keys(c.outgoing).length > 0;
        await new Promise<void>((resolve) => c.end(force, () => resolve()));
        logger.info({ clientId }, 'disconnected from the MQTT broker');
      })();
      return stopping;
    },
    publish(topic, payload, publishOptions) {
      queue.offer(topic, payload, publishOptions?.qos ?? 0, publishOptions?.retain ?? false);
    },
    get connected() {
      return client?.connected === true && stopping === undefined;
    },
    get droppedCount() {
      return queue.droppedCount;
    },
    on(event, listener) {
      events.on(event, listener as never);
      return connection;
    },
    once(event, listener) {
      events.once(event, listener as never);
      return connection;
    },
    off(event, listener) {
      events.off(event, listener as never);
      return connection;
    },
  };
  return connection;
}

function publishAsync(c: MqttClient, topic: string, payload: string): Promise<void> {
  return new Promise((resolve) => c.publish(topic, payload, { qos: 1, retain: true }, () => resolve()));
}

function withTimeout(promise: Promise<void>, timeoutMs: number): Promise<void> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<void>((resolve) => {
    timer = setTimeout(resolve, timeoutMs);
    timer.unref();
  });
  return Promise.race([promise, timeout]).finally(() => clearTimeout(timer));
}
