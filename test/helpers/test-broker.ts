import { startEmbeddedBroker } from '../../src/adapters/broker/embedded-broker.js';
import { startMosquitto, type MosquittoOptions, type TestMosquitto } from './mosquitto.js';

/** A broker for a test file: Mosquitto when installed, else the embedded broker. */
export interface TestBroker {
  readonly url: string;
  readonly port: number;
  /** 5 for Mosquitto, 4 for the embedded broker (MQTT 3.1.1 only). */
  readonly protocolVersion: 5 | 4;
  /** The Mosquitto process, or null when the embedded broker stands in. */
  readonly mosquitto: TestMosquitto | null;
  stop(): Promise<void>;
}

/**
 * Starts Mosquitto, or the embedded broker with a notice when Mosquitto is not installed, so
 * tests of behaviour both brokers share still run everywhere.
 */
export async function startTestBroker(options: MosquittoOptions = {}): Promise<TestBroker> {
  const mosquitto = await startMosquitto(options);
  if (mosquitto !== null) {
    return { url: mosquitto.url, port: mosquitto.port, protocolVersion: 5, mosquitto, stop: () => mosquitto.stop() };
  }
  console.warn('mosquitto is not installed: using the embedded broker (MQTT 3.1.1) instead');
  const embedded = await startEmbeddedBroker({ port: options.port ?? 0 });
  return { url: embedded.url, port: embedded.port, protocolVersion: 4, mosquitto: null, stop: () => embedded.stop() };
}
