/**
 * Measurement-model configuration, chosen by `type`. State names a sensor reads are checked
 * against the estimator's model by the estimator checks; shapes that need only the sensor's own
 * settings are checked here.
 */
import { z } from 'zod';
import {
  matrixSchema,
  matrixShapeProblem,
  positiveOrListSchema,
  positiveSchema,
  stateNameSchema,
  unionError,
} from './common-schema.js';
import type { DeepReadonly } from './deep-freeze.js';
import { checkCovarianceRows } from './model-schema.js';

/**
 * y = C x + D v, cov(v) = R. Give `C` (M×P rows, columns in model state order) or, for a
 * one-component sensor, `reads` (state → coefficient). Give `R` (r×r, r = columns of D, or M
 * without D) or `sigma` (one σ, or one per noise component: R = diag σ²).
 */
export const linearMeasurementSchema = z
  .strictObject({
    type: z.literal('linear'),
    C: matrixSchema.exactOptional(),
    reads: z.record(stateNameSchema, z.number()).exactOptional(),
    D: matrixSchema.exactOptional(),
    R: matrixSchema.exactOptional(),
    sigma: positiveOrListSchema.exactOptional(),
  })
  .superRefine((m, ctx) => {
    if ((m.C === undefined) === (m.reads === undefined)) {
      ctx.addIssue({ code: 'custom', message: 'give exactly one of "C" or "reads"' });
    }
    if (m.reads !== undefined && Object.keys(m.reads).length === 0) {
      ctx.addIssue({ code: 'custom', path: ['reads'], message: 'expected at least one state' });
    }
    if ((m.R === undefined) === (m.sigma === undefined)) {
      ctx.addIssue({ code: 'custom', message: 'give exactly one of "R" or "sigma"' });
    }
    const dim = m.C?.length ?? 1;
    let noiseDim = dim;
    if (m.D !== undefined) {
      noiseDim = m.D[0]?.length ?? 0;
      const problem = matrixShapeProblem(m.D, dim, noiseDim);
      if (problem !== null) return ctx.addIssue({ code: 'custom', path: ['D'], message: problem });
    }
    if (m.R !== undefined) checkCovarianceRows(ctx, 'R', m.R, noiseDim);
    if (Array.isArray(m.sigma) && m.sigma.length !== noiseDim) {
      ctx.addIssue({ code: 'custom', path: ['sigma'], message: `expected one σ, or a list of ${noiseDim}; got ${m.sigma.length}` });
    }
  });

const positionSchema = z.union(
  [z.tuple([stateNameSchema, stateNameSchema]), z.tuple([stateNameSchema, stateNameSchema, stateNameSchema])],
  unionError('expected [east, north] or [east, north, up] state names'),
);

/**
 * A WGS-84 latitude/longitude (and with `withHeight`, ellipsoidal height) fix, projected to the
 * local east/north(/up) frame at `origin`. `sigmaM`: horizontal accuracy (m) used when the
 * payload carries none.
 */
export const geodeticMeasurementSchema = z
  .strictObject({
    type: z.literal('geodetic'),
    origin: z.strictObject({
      latDeg: z.number().min(-90).max(90),
      lonDeg: z.number().min(-180).max(180),
      heightM: z.number().default(0),
    }),
    position: positionSchema,
    sigmaM: positiveSchema,
    withHeight: z.boolean().default(false),
  })
  .superRefine((m, ctx) => {
    if (m.withHeight && m.position.length !== 3) {
      ctx.addIssue({ code: 'custom', path: ['position'], message: 'withHeight needs [east, north, up] state names' });
    } else if (!m.withHeight && m.position.length === 3) {
      ctx.addIssue({ code: 'custom', path: ['position'], message: 'an up state needs withHeight: true' });
    }
  });

/** Range (m) and bearing (rad, clockwise from north) from a fixed site in the local frame (m). */
export const rangeBearingMeasurementSchema = z.strictObject({
  type: z.literal('range-bearing'),
  site: z.strictObject({ east: z.number(), north: z.number() }),
  position: z.tuple([stateNameSchema, stateNameSchema]),
  sigmaRangeM: positiveSchema,
  sigmaBearingRad: positiveSchema,
});

/** Speed over ground: the norm of the listed velocity states; `sigma` in the same unit. */
export const speedMeasurementSchema = z.strictObject({
  type: z.literal('speed'),
  velocity: z.array(stateNameSchema).min(1).max(3),
  sigma: positiveSchema,
});

/** Course over ground from [v_east, v_north] (rad, clockwise from north). */
export const headingMeasurementSchema = z.strictObject({
  type: z.literal('heading'),
  velocity: z.tuple([stateNameSchema, stateNameSchema]),
  sigmaRad: positiveSchema,
});

/** A measurement model, chosen by `type`. */
export const measurementSchema = z.discriminatedUnion('type', [
  linearMeasurementSchema,
  geodeticMeasurementSchema,
  rangeBearingMeasurementSchema,
  speedMeasurementSchema,
  headingMeasurementSchema,
]);

/** A validated measurement setting. */
export type MeasurementConfig = z.output<typeof measurementSchema>;

/** The measurement dimension M and, in words, why (for messages). */
export function measurementDimension(m: DeepReadonly<MeasurementConfig>): { dim: number; because: string } {
  switch (m.type) {
    case 'linear':
      return m.C === undefined ? { dim: 1, because: 'a linear sensor with reads' } : { dim: m.C.length, because: 'the rows of C' };
    case 'geodetic':
      return m.withHeight ? { dim: 3, because: 'geodetic with height' } : { dim: 2, because: 'geodetic without height' };
    case 'range-bearing':
      return { dim: 2, because: 'range-bearing' };
    case 'speed':
    case 'heading':
      return { dim: 1, because: m.type };
    default: {
      const never: never = m;
      return never;
    }
  }
}

/** Every state name a measurement reads, with its path relative to the measurement. */
export function statesReadBy(m: DeepReadonly<MeasurementConfig>): { path: (string | number)[]; state: string }[] {
  const list = (key: string, names: readonly string[]) => names.map((state, i) => ({ path: [key, i], state }));
  switch (m.type) {
    case 'linear':
      return Object.keys(m.reads ?? {}).map((state) => ({ path: ['reads', state], state }));
    case 'geodetic':
    case 'range-bearing':
      return list('position', m.position);
    case 'speed':
    case 'heading':
      return list('velocity', m.velocity);
    default: {
      const never: never = m;
      return never;
    }
  }
}

/** True when the measurement function is linear in the state (a plain KF can use it). */
export function isLinearMeasurement(m: DeepReadonly<MeasurementConfig>): boolean {
  return m.type === 'linear';
}
