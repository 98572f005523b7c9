/**
 * An estimator as the engine runs it: the core Estimator plus, per sensor, its compiled topic
 * pattern and payload decoder with a reusable slot, and the estimator's publish templates. Built
 * once from the validated config; nothing here is decided per message.
 */
import type { DeepReadonly } from '../config/deep-freeze.js';
import type { EstimatorConfig } from '../config/config-schema.js';
import { Estimator } from '../estimation/estimator.js';
import { GeodeticMeasurement } from '../estimation/measurements/geodetic-measurement.js';
import type { MeasurementModel } from '../estimation/measurements/measurement-model.js';
import { buildMeasurementModel, buildProcessModel } from './model-factory.js';
import { compilePayloadDecoder, createDecodedMeasurement, type DecodedMeasurement, type PayloadDecoder } from './payload-decoder.js';
import type { PayloadDecoderSpec } from './payload-decoder-spec.js';
import { compileTopicPattern, type TopicPattern } from './topic-pattern.js';
import { EstimateSerializer } from './estimate-message.js';
import type { HealthThresholds } from './health-evaluator.js';

/** One sensor of a running estimator. */
export interface RuntimeSensor {
  readonly name: string;
  /** Position in the estimator's processing order. */
  readonly index: number;
  readonly pattern: TopicPattern;
  readonly qos: 0 | 1 | 2;
  readonly decoder: PayloadDecoder;
  readonly slot: DecodedMeasurement;
  readonly model: MeasurementModel;
  /**
   * Rewrites a payload's own accuracy (decoded as σ²·I in reported units) into the model's
   * measurement space in place, when the two differ (geodetic fixes); null otherwise.
   */
  readonly adaptCovariance: ((slot: DecodedMeasurement, scratch: Float64Array) => boolean) | null;
}

/** A compiled publish topic template. */
export type TopicTemplate = (entity: string, captures: readonly string[]) => string;

/** A running estimator. */
export interface EstimatorRuntime {
  readonly name: string;
  readonly config: DeepReadonly<EstimatorConfig>;
  readonly estimator: Estimator;
  readonly sensors: readonly RuntimeSensor[];
  readonly wildcardNames: readonly string[];
  readonly serializer: EstimateSerializer;
  readonly estimateTopic: TopicTemplate;
  readonly smoothedTopic: TopicTemplate | null;
  readonly healthTopic: TopicTemplate;
  readonly healthEventTopic: string;
  readonly health: HealthThresholds;
}

/** Builds one estimator from its validated config (throws on inconsistencies the schema cannot see). */
export function buildEstimatorRuntime(cfg: DeepReadonly<EstimatorConfig>): EstimatorRuntime {
  const process = buildProcessModel(cfg.model);
  const names = process.stateNames;
  const n = names.length;
  const sensorEntries = Object.entries(cfg.sensors);
  const sensors: RuntimeSensor[] = sensorEntries.map(([name, s], index) => {
    const model = buildMeasurementModel(s.measurement, names);
    const decoder = compilePayloadDecoder(s.decode as PayloadDecoderSpec, model.dim);
    return {
      name,
      index,
      pattern: compileTopicPattern(s.topic),
      qos: s.qos,
      decoder,
      slot: createDecodedMeasurement(model.dim),
      model,
      adaptCovariance: model instanceof GeodeticMeasurement ? geodeticAccuracy(model) : null,
    };
  });
  const priorMean = new Float64Array(n);
  const priorCovariance = new Float64Array(n * n);
  names.forEach((state, i) => {
    priorMean[i] = cfg.prior.mean[state] ?? 0;
    const sigma = cfg.prior.sigma[state] ?? cfg.prior.defaultSigma;
    priorCovariance[i * n + i] = sigma * sigma;
  });
  const estimator = new Estimator({
    process,
    sensors: sensors.map((s) => ({
      name: s.name,
      model: s.model,
      ...(cfg.sensors[s.name]!.expectedPeriodS === undefined ? {} : { expectedPeriodS: cfg.sensors[s.name]!.expectedPeriodS! }),
    })),
    filter: cfg.filter.kind,
    unscented: cfg.filter.ukf,
    priorMean,
    priorCovariance,
    gateProbability: cfg.gate.probability === 'off' ? null : cfg.gate.probability,
    maxConsecutiveRejections: cfg.gate.maxConsecutiveRejections,
    onRejectionRun: cfg.gate.onRejectionRun,
    inflateFactor: cfg.gate.inflateFactor,
    horizonS: cfg.history.horizonS,
    maxEntries: cfg.history.maxEntries,
    futureToleranceS: cfg.futureToleranceS,
    maxCoastS: cfg.coast.maxS,
    lagSteps: cfg.smoothing.lagSteps,
    healthWindowN: cfg.health.windowN,
    healthConfidence: cfg.health.confidence,
  });
  const wildcardNames = sensors[0]?.pattern.keyNames ?? [];
  const sigmaLimits = new Float64Array(n).fill(Number.NaN);
  for (const [state, limit] of Object.entries(cfg.health.sigmaLimits ?? {})) sigmaLimits[names.indexOf(state)] = limit;
  return {
    name: cfg.name,
    config: cfg,
    estimator,
    sensors,
    wildcardNames,
    serializer: new EstimateSerializer(cfg.name, names, cfg.publish.includeCovariance),
    estimateTopic: compileTemplate(cfg.publish.topic, cfg.name, wildcardNames),
    healthTopic: compileTemplate(cfg.publish.healthTopic, cfg.name, wildcardNames),
    healthEventTopic: cfg.publish.healthEventTopic.replaceAll('{estimator}', cfg.name),
    smoothedTopic: cfg.smoothing.lagSteps > 0 && cfg.publish.smoothedTopic !== undefined
      ? compileTemplate(cfg.publish.smoothedTopic, cfg.name, wildcardNames)
      : null,
    health: {
      gateRateLimit: cfg.health.gateRateLimit,
      silentFactor: cfg.health.silentFactor,
      ...(cfg.health.traceLimit === undefined ? {} : { traceLimit: cfg.health.traceLimit }),
      sigmaLimits,
      enterAfter: cfg.health.enterAfter,
      leaveAfter: cfg.health.leaveAfter,
      flagLowNis: cfg.health.flagLowNis,
    },
  };
}

/** `statecast/{estimator}/{entity}/estimate` → a function of the entity and its captured levels. */
export function compileTemplate(template: string, estimator: string, wildcardNames: readonly string[]): TopicTemplate {
  type Part = { text: string } | { entity: true } | { capture: number };
  const parts: Part[] = [];
  const re = /\{([A-Za-z_][A-Za-z0-9_]*)\}/g;
  let last = 0;
  for (let m = re.exec(template); m !== null; m = re.exec(template)) {
    parts.push({ text: template.slice(last, m.index) });
    const name = m[1]!;
    if (name === 'estimator') parts.push({ text: estimator });
    else if (name === 'entity') parts.push({ entity: true });
    else {
      const i = wildcardNames.indexOf(name);
      if (i < 0) throw new Error(`publish topic ${template}: unknown placeholder {${name}}`);
      parts.push({ capture: i });
    }
    last = m.index + m[0].length;
  }
  parts.push({ text: template.slice(last) });
  return (entity, captures) => {
    let s = '';
    for (const p of parts) s += 'text' in p ? p.text : 'entity' in p ? entity : (captures[p.capture] ?? '');
    return s;
  };
}

function geodeticAccuracy(model: GeodeticMeasurement): (slot: DecodedMeasurement, scratch: Float64Array) => boolean {
  return (slot, scratch) => {
    // The decoder turned a reported σ (metres) into σ² on the diagonal; recover σ and map it
    // into the model's scaled latitude/longitude space at the fix's own latitude.
    const sigmaM = Math.sqrt(slot.covariance[0]!);
    scratch.set(slot.values);
    model.normalizeInPlace(scratch);
    return model.horizontalAccuracyToCovarianceInto(sigmaM, scratch, slot.covariance);
  };
}
