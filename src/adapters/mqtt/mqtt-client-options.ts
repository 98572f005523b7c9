/**
 * Turns the broker config into mqtt.js client options: a persistent session, the last will on
 * the status topic, credentials and TLS material.
 */
import { readFile } from 'node:fs/promises';
import type { IClientOptions } from 'mqtt';
import type { BrokerConfig } from '../../config/config-schema.js';

/** Broker settings with the URL resolved (from the config, or the embedded broker's). */
export type ResolvedBrokerConfig = Readonly<BrokerConfig> & { readonly url: string };

/** Certificate material read from the files named in `broker.tls`. */
export interface TlsMaterial {
  readonly ca?: Buffer;
  readonly cert?: Buffer;
  readonly key?: Buffer;
}

/** The retained status payload while the daemon is not connected (also the last will). */
export const OFFLINE_STATUS = '{"status":"offline"}';

/**
 * Reads `broker.tls.caFile`, `certFile` and `keyFile`.
 * @throws Error naming the config key and the path when a file cannot be read.
 */
export async function readTlsMaterial(tls: BrokerConfig['tls']): Promise<TlsMaterial> {
  if (tls === undefined) return {};
  const read = async (key: 'caFile' | 'certFile' | 'keyFile'): Promise<Buffer | undefined> => {
    const path = tls[key];
    if (path === undefined) return undefined;
    try {
      return await readFile(path);
    } catch (err) {
      throw new Error(`cannot read broker.tls.${key} "${path}": ${(err as Error).message}`, { cause: err });
    }
  };
  const [ca, cert, key] = await Promise.all([read('caFile'), read('certFile'), read('keyFile')]);
  return { ...(ca && { ca }), ...(cert && { cert }), ...(key && { key }) };
}

/** What {@link mqttClientOptions} needs besides the broker config. */
export interface MqttClientOptionsInput {
  readonly broker: ResolvedBrokerConfig;
  readonly clientId: string;
  readonly statusTopic: string;
  readonly tls: TlsMaterial;
}

/**
 * mqtt.js options for the daemon's connection.
 *
 * `clean: false` with a stable client id keeps the session, so QoS 1 messages published while
 * the daemon is away are queued by the broker and delivered when it returns. Under MQTT 5 the
 * session also needs `sessionExpiryInterval`, or it ends at disconnect; under 3.1.1
 * `clean: false` alone keeps it. Re-subscription and reconnect timing are handled by the
 * connection (`resubscribe: false`; `reconnectPeriod` is adjusted per attempt), and QoS 0 is not
 * queued by mqtt.js because the connection's own bounded queue holds messages while offline.
 */
export function mqttClientOptions(input: MqttClientOptionsInput): IClientOptions {
  const { broker, clientId, statusTopic, tls } = input;
  const options: IClientOptions = {
    protocolVersion: broker.protocolVersion,
    clientId,
    clean: false,
    keepalive: broker.keepaliveS,
    connectTimeout: broker.connectTimeoutMs,
    reconnectPeriod: broker.reconnectMinMs,
    // Keep trying after a refused CONNACK (e.g. an ACL fixed on the broker) instead of giving up.
    reconnectOnConnackError: true,
    resubscribe: false,
    queueQoSZero: false,
    // mqtt.js formats a debug line per packet even with nobody listening (4 % of the daemon's
    // CPU in the e2e bench); our own logger says what matters.
    log: () => {},
    will: { topic: statusTopic, payload: Buffer.from(OFFLINE_STATUS), qos: 1, retain: true },
    rejectUnauthorized: broker.tls?.verifyCertificate ?? true,
    ...tls,
  };
  if (broker.protocolVersion === 5) options.properties = { sessionExpiryInterval: broker.sessionExpiryS };
  if (broker.username !== undefined) options.username = broker.username;
  if (broker.password !== undefined) options.password = broker.password;
  return options;
}

/** The URL without user info, for logs (a password in the URL must never be logged). */
export function redactBrokerUrl(url: string): string {
  return url.replace(/^([a-z]+:\/\/)[^@/]*@/i, '$1');
}
