/** How a refused CONNACK is reported. */
import { redactBrokerUrl, type ResolvedBrokerConfig } from './mqtt-client-options.js';

/**
 * A refused CONNACK (mqtt.js error with a numeric reason code) as an error an operator can act
 * on. Reason 1 to an MQTT 5 CONNECT is what a 3.1.1-only broker, such as the embedded one, answers.
 */
export function connackRefusal(broker: ResolvedBrokerConfig, err: Error & { code?: unknown }): Error {
  const hint =
    err.code === 1 && broker.protocolVersion === 5
      ? ' The broker does not accept MQTT 5 (the embedded broker speaks 3.1.1 only): set broker.protocolVersion to 4.'
      : '';
  return new Error(`the MQTT broker at ${redactBrokerUrl(broker.url)} refused the connection: ${err.message}.${hint}`, { cause: err });
}
