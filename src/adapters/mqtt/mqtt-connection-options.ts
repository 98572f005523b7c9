/** Options of the MQTT connection; see `createMqttConnection`. */
import type { IClientOptions, MqttClient } from 'mqtt';
import type { ResolvedBrokerConfig } from './mqtt-client-options.js';

/** A pino-like logger: `(fields, message)`. */
export interface MqttLogger {
  info(fields: object, message: string): void;
  warn(fields: object, message: string): void;
  error(fields: object, message: string): void;
  debug(fields: object, message: string): void;
}

/** One topic filter to subscribe to. */
export interface MqttSubscription {
  readonly filter: string;
  readonly qos: 0 | 1 | 2;
}

/** Options of `createMqttConnection`. */
export interface MqttConnectionOptions {
  readonly broker: ResolvedBrokerConfig;
  /** Stable across restarts, so the broker finds the session again. */
  readonly clientId: string;
  readonly logger: MqttLogger;
  readonly subscriptions: readonly MqttSubscription[];
  /**
   * Called for every message, `arrivalMs` being the clock reading on arrival. Must be
   * synchronous: a QoS 1 message is acknowledged once it returns. Should not throw; a throw is
   * logged and the message is acknowledged anyway (it would throw again on redelivery).
   */
  readonly onMessage: (topic: string, payload: Buffer, arrivalMs: number) => void;
  /** Retained status topic and last will. Default `broker.statusTopic`. */
  readonly statusTopic?: string;
  /** Let `start()` wait for the first connection. Default true; false resolves at once. */
  readonly waitForConnect?: boolean;
  /** Outgoing messages held while offline or flow-controlled before the oldest is dropped. Default 10000. */
  readonly maxQueuedOutgoing?: number;
  /** Bytes (topic plus payload) held while offline or flow-controlled before the oldest is dropped. Default 8 MiB. */
  readonly maxQueuedOutgoingBytes?: number;
  /**
   * Longest an outgoing packet waits so that several leave in one socket write, in ms (at least
   * 1). Default 1: at thousands of estimates a second one write per estimate cost more CPU than
   * all the estimation.
   */
  readonly flushDelayMs?: number;
  /** Buffered bytes that send the batch at once. Default 16384 (a socket's high-water mark). */
  readonly flushBytes?: number;
  /** Upper bound for `stop()` to flush outgoing messages and the final status. Default 5000 ms. */
  readonly stopTimeoutMs?: number;
  /** Clock in epoch milliseconds. Default `Date.now`. */
  readonly now?: () => number;
  /** Jitter source in [0, 1) for the reconnect backoff. Default `Math.random`. */
  readonly random?: () => number;
  /** Creates the mqtt.js client. Default `mqtt.connect`; tests wrap it to reach the socket. */
  readonly connectClient?: (url: string, options: IClientOptions) => MqttClient;
}

/** Options of one publish. Default QoS 0, not retained. */
export interface MqttPublishOptions {
  readonly qos?: 0 | 1 | 2;
  readonly retain?: boolean;
}
