/**
 * A recording decoded once, for every likelihood evaluation of a tuning run: each message is
 * routed and decoded with the estimator's own compiled topic patterns and payload decoders, as
 * the daemon would, and kept per entity in event-time order. Decoding does not depend on the
 * noise parameters, so it is not repeated per candidate.
 */
import type { EstimatorRuntime } from '../../engine/estimator-runtime.js';
import { entityKeyOf } from '../../engine/topic-pattern.js';

/** One recorded message: arrival time (ms since the epoch), topic and raw payload. */
export interface RecordedMessage {
  readonly t: number;
  readonly topic: string;
  readonly payload: Uint8Array;
}

/** One decoded measurement, ready for `track.ingest`. */
export interface MeasurementRecord {
  /** Sensor index in the estimator's order. */
  readonly sensor: number;
  /** Values as reported (the track normalizes them). */
  readonly values: Float64Array;
  /** The payload's own covariance in model space, or null for the sensor's configured R. */
  readonly R: Float64Array | null;
  /** Event time (s since the epoch). */
  readonly tS: number;
  /** Arrival time (s), the clock the daemon would have compared the stamp against. */
  readonly nowS: number;
}

/** One entity's measurements in event-time order. */
export interface EntityMeasurements {
  readonly entity: string;
  readonly records: readonly MeasurementRecord[];
}

/** A decoded recording and what could not be used. */
export interface DecodedRecording {
  readonly entities: readonly EntityMeasurements[];
  /** Measurements decoded (a message matching two sensors counts twice). */
  readonly decoded: number;
  /** Messages that matched a sensor but whose payload the decoder refused. */
  readonly refused: number;
  /** Messages on no topic of this estimator. */
  readonly unrouted: number;
}

/**
 * Decodes messages for one estimator as they are read (`add` fits the recording reader's
 * visitor, whose payload view is reused: values are copied out). `finish` sorts each entity's
 * measurements by event time (stably, so equal stamps keep arrival order): the prediction-error
 * decomposition needs each innovation against all earlier data, which in-order processing gives
 * without the daemon's late-data re-filtering.
 */
export class RecordingDecoder {
  private readonly byEntity = new Map<string, MeasurementRecord[]>();
  private decoded = 0;
  private refused = 0;
  private unrouted = 0;
  private readonly scratch = new Float64Array(64);

  constructor(private readonly runtime: EstimatorRuntime) {}

  /** Routes and decodes one message (arrival time in epoch ms). */
  readonly add = (tMs: number, topic: string, payload: Uint8Array): void => {
    let routed = false;
    const arrivalS = tMs / 1000;
    for (const sensor of this.runtime.sensors) {
      const captures = sensor.pattern.match(topic);
      if (captures === null) continue;
      routed = true;
      const slot = sensor.slot;
      if (!sensor.decoder.decode(payload, arrivalS, slot)) {
        this.refused += 1;
        continue;
      }
      let R: Float64Array | null = null;
      if (slot.hasCovariance) {
        R = slot.covariance;
        if (sensor.adaptCovariance !== null && !sensor.adaptCovariance(slot, this.scratch)) R = null;
      }
      const entity = entityKeyOf(captures);
      let list = this.byEntity.get(entity);
      if (list === undefined) this.byEntity.set(entity, (list = []));
      list.push({ sensor: sensor.index, values: Float64Array.from(slot.values), R: R === null ? null : Float64Array.from(R), tS: slot.timeS, nowS: arrivalS });
      this.decoded += 1;
    }
    if (!routed) this.unrouted += 1;
  };

  /** The measurements so far, per entity in event-time order. */
  finish(): DecodedRecording {
    const entities = [...this.byEntity].map(([entity, records]) => ({ entity, records: [...records].sort((a, b) => a.tS - b.tS) }));
    return { entities, decoded: this.decoded, refused: this.refused, unrouted: this.unrouted };
  }
}

/** Decodes a list of messages for one estimator (see RecordingDecoder). */
export function decodeRecording(runtime: EstimatorRuntime, messages: Iterable<RecordedMessage>): DecodedRecording {
  const decoder = new RecordingDecoder(runtime);
  for (const m of messages) decoder.add(m.t, m.topic, m.payload);
  return decoder.finish();
}
