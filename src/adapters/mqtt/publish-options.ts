/**
 * Frozen publish options, one per (QoS, retain) pair, so a publish on the hot path allocates no
 * options object (neither the connection nor mqtt.js writes to the object it is given).
 */

/** The options of one publish, shared. */
export interface SharedPublishOptions {
  readonly qos: 0 | 1 | 2;
  readonly retain: boolean;
}

const OPTIONS: readonly (readonly [SharedPublishOptions, SharedPublishOptions])[] = ([0, 1, 2] as const).map(
  (qos) => [Object.freeze({ qos, retain: false }), Object.freeze({ qos, retain: true })] as const,
);

/** The shared options object for `qos` and `retain`. */
export function publishOptionsFor(qos: 0 | 1 | 2, retain: boolean): SharedPublishOptions {
  return OPTIONS[qos]![retain ? 1 : 0];
}
