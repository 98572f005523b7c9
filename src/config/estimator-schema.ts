/**
 * One estimator: a process model, a filter, the sensors that feed it and what it publishes.
 * Each entity (e.g. one tank, one vehicle) seen on the sensors' topics gets its own track.
 * All defaults live here; units are in the names.
 */
import { z } from 'zod';
import {
  countSchema,
  identifierSchema,
  nonNegativeSchema,
  positiveSchema,
  stateNameSchema,
  topicTemplateSchema,
  unionError,
} from './common-schema.js';
import { checkEstimator } from './estimator-checks.js';
import { modelSchema } from './model-schema.js';
import { sensorSchema } from './sensor-schema.js';
import { checkTunePaths, tuneSchema } from './tune-schema.js';

/** Filter family; `ukf` tunes the unscented transform (alpha 1e-3…1, beta ≥ 0, kappa). */
export const filterSchema = z.strictObject({
  kind: z.enum(['kf', 'ekf', 'ukf']).default('ekf'),
  ukf: z
    .strictObject({
      alpha: z.number().min(1e-3).max(1).default(1),
      beta: nonNegativeSchema.default(2),
      kappa: z.number().default(0),
    })
    .prefault({}),
});

/**
 * The initial state of a new track, before its first measurement sets the states that
 * measurement observes. Unnamed states start at mean 0 with σ `defaultSigma` (default 1e3, in
 * each state's own unit: wide enough to let the first measurements decide).
 */
export const priorSchema = z.strictObject({
  mean: z.record(stateNameSchema, z.number()).prefault({}),
  sigma: z.record(stateNameSchema, positiveSchema).prefault({}),
  defaultSigma: positiveSchema.default(1e3),
});

/**
 * Chi-square innovation gate. `probability`: the share of good measurements the gate accepts
 * (0.5…0.999999), or `off`. After `maxConsecutiveRejections` rejections in a row the track is
 * reinitialized from the next measurement, or its covariance inflated by `inflateFactor`.
 */
export const gateSchema = z.strictObject({
  probability: z
    .union([z.number().min(0.5).max(0.999999), z.literal('off')], unionError('expected a probability from 0.5 to 0.999999, or "off"'))
    .default(0.99),
  maxConsecutiveRejections: countSchema.default(5),
  onRejectionRun: z.enum(['reinitialize', 'inflate']).default('reinitialize'),
  inflateFactor: z.number().gt(1).default(10),
});

/**
 * Track health: over the last `windowN` updates, the NIS is tested at `confidence`; a track
 * turns unhealthy after `enterAfter` failing windows and healthy again after `leaveAfter`
 * passing ones. Also unhealthy: a gate-rejection share above `gateRateLimit`, a sensor silent
 * for `silentFactor` × its expectedPeriodS, a covariance trace above `traceLimit`, or a state σ
 * above its `sigmaLimits` entry (state unit).
 */
export const healthSchema = z.strictObject({
  windowN: z.number().int().min(2).default(20),
  confidence: z.number().min(0.5).max(0.9999).default(0.95),
  enterAfter: countSchema.default(3),
  leaveAfter: countSchema.default(5),
  gateRateLimit: z.number().min(0).max(1).default(0.2),
  silentFactor: z.number().gt(1).default(3),
  traceLimit: positiveSchema.exactOptional(),
  sigmaLimits: z.record(stateNameSchema, positiveSchema).exactOptional(),
  /**
   * Whether a windowed NIS mean below its band (noise overstated: the filter is pessimistic,
   * its σ too wide) degrades health. Default true; a fast sensor on a model that is rough at
   * short time scales (10 Hz wheel speed on constant velocity) may warrant false.
   */
  flagLowNis: z.boolean().default(true),
});

/**
 * What an estimator publishes. `topic` and `smoothedTopic` are templates with `{estimator}`,
 * `{entity}` (the entity key: captured wildcard values joined by "/") and the sensors' own
 * wildcard names. `mode`: publish after every update, or at `rateHz` (required then). Smoothed
 * estimates (smoothing.lagSteps > 0) go to `smoothedTopic`; without it they are not published.
 */
export const publishSchema = z
  .strictObject({
    topic: topicTemplateSchema.default('statecast/{estimator}/{entity}/estimate'),
    mode: z.enum(['every-update', 'fixed-rate']).default('every-update'),
    rateHz: positiveSchema.exactOptional(),
    qos: z.union([z.literal(0), z.literal(1)], unionError('expected 0 or 1')).default(0),
    retain: z.boolean().default(false),
    includeCovariance: z.boolean().default(false),
    smoothedTopic: topicTemplateSchema.exactOptional(),
    /** Retained per-entity health (state, reasons, per-sensor states), re-published on each change. */
    healthTopic: topicTemplateSchema.default('statecast/{estimator}/{entity}/health'),
    /** Every health transition (of a track or a sensor) as an event, not retained; `{estimator}` only. */
    healthEventTopic: z.string().min(1).regex(/^[^+#]*$/, { error: 'expected a topic without wildcards' }).default('statecast/{estimator}/health-events'),
  })
  .superRefine((p, ctx) => {
    if (p.mode === 'fixed-rate' && p.rateHz === undefined) {
      ctx.addIssue({ code: 'custom', path: ['rateHz'], message: 'required when mode is "fixed-rate"' });
    } else if (p.mode === 'every-update' && p.rateHz !== undefined) {
      ctx.addIssue({ code: 'custom', path: ['rateHz'], message: 'only used when mode is "fixed-rate"' });
    }
  });

/**
 * An estimator. `history`: how far back (s, entries) a track keeps its past to re-filter late
 * measurements; `futureToleranceS`: how far ahead of the clock a time stamp may be; `coast.maxS`:
 * how long a track predicts without measurements before it is marked stale; `smoothing.lagSteps`:
 * fixed-lag smoothing depth (0 = off); `entities`: track cap and idle eviction (s); `tune`: the
 * noise parameters `statecast tune` may fit (see tune-schema; the daemon ignores it).
 */
export const estimatorFieldsSchema = z.strictObject({
  name: identifierSchema,
  model: modelSchema,
  filter: filterSchema.prefault({}),
  prior: priorSchema.prefault({}),
  gate: gateSchema.prefault({}),
  history: z.strictObject({ horizonS: positiveSchema.default(120), maxEntries: countSchema.default(64) }).prefault({}),
  futureToleranceS: nonNegativeSchema.default(5),
  coast: z.strictObject({ maxS: positiveSchema.default(30) }).prefault({}),
  smoothing: z.strictObject({ lagSteps: z.number().int().min(0).default(0) }).prefault({}),
  entities: z.strictObject({ max: countSchema.default(10000), idleEvictS: positiveSchema.default(3600) }).prefault({}),
  health: healthSchema.prefault({}),
  publish: publishSchema.prefault({}),
  sensors: z.record(identifierSchema, sensorSchema),
  tune: tuneSchema.exactOptional(),
});

/** An estimator with its cross-field checks (states, wildcards, topics; see estimator-checks). */
export const estimatorSchema = estimatorFieldsSchema.superRefine(checkEstimator).superRefine(checkTunePaths);

/** A validated estimator. */
export type EstimatorConfig = z.output<typeof estimatorSchema>;
