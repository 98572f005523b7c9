/**
 * Process-model configuration: one block, or a composite of blocks whose states are laid end to
 * end in the order written. Within a block the state order is fixed and documented per block;
 * linear sensors' `C` columns follow this order (see `modelStateNames`).
 */
import { z } from 'zod';
import { checkCovariance } from '../estimation/models/matrix-checks.js';
import { ModelConfigError } from '../estimation/model-config-error.js';
import {
  matrixSchema,
  matrixShapeProblem,
  positiveOrListSchema,
  positiveSchema,
  stateNameSchema,
  type MatrixRows,
} from './common-schema.js';
import type { DeepReadonly } from './deep-freeze.js';

const stateListSchema = z.array(stateNameSchema).min(1);
type Ctx = z.RefinementCtx;

function checkPerEntry(ctx: Ctx, key: string, value: number | readonly number[], count: number, what: string): void {
  if (typeof value !== 'number' && value.length !== count) {
    ctx.addIssue({ code: 'custom', path: [key], message: `expected one number or ${count} (one per ${what}), got ${value.length}` });
  }
}

function checkNames(ctx: Ctx, key: string, names: readonly string[] | undefined, count: number): void {
  if (names !== undefined && names.length !== count) {
    ctx.addIssue({ code: 'custom', path: [key], message: `expected ${count} names (one per axis), got ${names.length}` });
  }
}

/** Adds an issue when `m` is not rows×cols; returns true when the shape fits. */
function checkShape(ctx: Ctx, key: string, m: MatrixRows, rows: number, cols: number): boolean {
  const problem = matrixShapeProblem(m, rows, cols);
  if (problem !== null) ctx.addIssue({ code: 'custom', path: [key], message: problem });
  return problem === null;
}

/** Adds an issue when `m` is not an n×n symmetric positive semi-definite matrix. */
export function checkCovarianceRows(ctx: Ctx, key: string, m: MatrixRows, n: number): void {
  if (!checkShape(ctx, key, m, n, n)) return;
  try {
    checkCovariance(key, m, n);
  } catch (err) {
    if (!(err instanceof ModelConfigError)) throw err;
    ctx.addIssue({ code: 'custom', path: [key], message: err.message });
  }
}

/** Default rate names: `v_<axis>` for several axes, `<axis>_rate` for a single one (`level` → `level_rate`). */
export function defaultRateNames(axes: readonly string[]): string[] {
  return axes.map((a) => (axes.length === 1 ? `${a}_rate` : `v_${a}`));
}

/** Default acceleration names: `a_<axis>` for several axes, `<axis>_accel` for a single one. */
export function defaultAccelerationNames(axes: readonly string[]): string[] {
  return axes.map((a) => (axes.length === 1 ? `${a}_accel` : `a_${a}`));
}

/** Independent random walks; states in the order listed. `q`: spectral density, unit²/s, one or per state. */
export const randomWalkSchema = z
  .strictObject({ type: z.literal('random-walk'), states: stateListSchema, q: positiveOrListSchema })
  .superRefine((b, ctx) => checkPerEntry(ctx, 'q', b.q, b.states.length, 'state'));

/**
 * Constant velocity (white-noise acceleration) per axis; states: all positions, then all
 * rates (`[east, north, v_east, v_north]`), the order of linear sensors' C columns. `q`: acceleration spectral density, unit²/s³, one or per axis.
 * `rateNames` defaults by `defaultRateNames`.
 */
export const constantVelocitySchema = z
  .strictObject({
    type: z.literal('constant-velocity'),
    axes: stateListSchema,
    rateNames: stateListSchema.exactOptional(),
    q: positiveOrListSchema,
  })
  .superRefine((b, ctx) => {
    checkPerEntry(ctx, 'q', b.q, b.axes.length, 'axis');
    checkNames(ctx, 'rateNames', b.rateNames, b.axes.length);
  })
  .transform((b) => ({ ...b, rateNames: b.rateNames ?? defaultRateNames(b.axes) }));

/**
 * Constant acceleration (white-noise jerk) per axis; states: all positions, then all rates,
 * then all accelerations. `q`: jerk spectral density, unit²/s⁵, one or per axis. Names default by
 * `defaultRateNames` and `defaultAccelerationNames`.
 */
export const constantAccelerationSchema = z
  .strictObject({
    type: z.literal('constant-acceleration'),
    axes: stateListSchema,
    rateNames: stateListSchema.exactOptional(),
    accelerationNames: stateListSchema.exactOptional(),
    q: positiveOrListSchema,
  })
  .superRefine((b, ctx) => {
    checkPerEntry(ctx, 'q', b.q, b.axes.length, 'axis');
    checkNames(ctx, 'rateNames', b.rateNames, b.axes.length);
    checkNames(ctx, 'accelerationNames', b.accelerationNames, b.axes.length);
  })
  .transform((b) => ({
    ...b,
    rateNames: b.rateNames ?? defaultRateNames(b.axes),
    accelerationNames: b.accelerationNames ?? defaultAccelerationNames(b.axes),
  }));

/** A first-order Gauss–Markov state (a slowly wandering bias): correlation time `tauS` (s), steady-state σ `sigma` (state unit). */
export const gaussMarkovSchema = z.strictObject({
  type: z.literal('gauss-markov'),
  state: stateNameSchema,
  tauS: positiveSchema,
  sigma: positiveSchema,
});

/** dx = F x dt + G dβ, E[dβ dβᵀ] = Qc dt: F is P×P, G is P×r, Qc (spectral densities) r×r. */
export const continuousSchema = z
  .strictObject({ type: z.literal('continuous'), states: stateListSchema, F: matrixSchema, G: matrixSchema, Qc: matrixSchema })
  .superRefine((b, ctx) => {
    const p = b.states.length;
    const r = b.G[0]?.length ?? 0;
    checkShape(ctx, 'F', b.F, p, p);
    if (checkShape(ctx, 'G', b.G, p, r)) checkCovarianceRows(ctx, 'Qc', b.Qc, r);
  });

/**
 * x(n+1) = A x(n) + B w(n) + G u(n), cov(w) = Q, for a fixed step `stepS` (s), in the trade's
 * notation. A is P×P; B (noise input) P×r with Q r×r, or Q P×P when B is absent; G (known
 * inputs) P×u.
 */
export const discreteSchema = z
  .strictObject({
    type: z.literal('discrete'),
    states: stateListSchema,
    stepS: positiveSchema,
    A: matrixSchema,
    B: matrixSchema.exactOptional(),
    Q: matrixSchema,
    G: matrixSchema.exactOptional(),
  })
  .superRefine((b, ctx) => {
    const p = b.states.length;
    checkShape(ctx, 'A', b.A, p, p);
    if (b.G !== undefined) checkShape(ctx, 'G', b.G, p, b.G[0]?.length ?? 0);
    const r = b.B === undefined ? p : (b.B[0]?.length ?? 0);
    if (b.B === undefined || checkShape(ctx, 'B', b.B, p, r)) checkCovarianceRows(ctx, 'Q', b.Q, r);
  });

const blockOptions = [
  randomWalkSchema,
  constantVelocitySchema,
  constantAccelerationSchema,
  gaussMarkovSchema,
  continuousSchema,
  discreteSchema,
] as const;

/** One process-model block, chosen by `type`. */
export const modelBlockSchema = z.discriminatedUnion('type', [...blockOptions]);

/** Several blocks side by side; their states are concatenated in order. */
export const compositeSchema = z.strictObject({
  type: z.literal('composite'),
  blocks: z.array(modelBlockSchema).min(1),
});

/** A process model: a composite or a single block. State names must be unique across it. */
export const modelSchema = z.discriminatedUnion('type', [compositeSchema, ...blockOptions]).superRefine((model, ctx) => {
  const blocks = model.type === 'composite' ? model.blocks : [model];
  const seen = new Set<string>();
  blocks.forEach((block, i) => {
    for (const name of blockStateNames(block)) {
      if (seen.has(name)) {
        const path = model.type === 'composite' ? ['blocks', i] : [];
        ctx.addIssue({ code: 'custom', path, message: `state name "${name}" is defined twice` });
      }
      seen.add(name);
    }
  });
});

/** A validated process-model block. */
export type ModelBlockConfig = z.output<typeof modelBlockSchema>;
/** A validated process model. */
export type ModelConfig = z.output<typeof modelSchema>;

/** The state names of one block in state-vector order. */
export function blockStateNames(block: DeepReadonly<ModelBlockConfig>): string[] {
  switch (block.type) {
    case 'random-walk':
    case 'continuous':
    case 'discrete':
      return [...block.states];
    case 'gauss-markov':
      return [block.state];
    case 'constant-velocity': {
      // Refinements may see the block before its transform has filled the defaults in.
      const rates = block.rateNames ?? defaultRateNames(block.axes);
      return [...block.axes, ...block.axes.map((a, i) => rates[i] ?? `v_${a}`)];
    }
    case 'constant-acceleration': {
      const rates = block.rateNames ?? defaultRateNames(block.axes);
      const accels = block.accelerationNames ?? defaultAccelerationNames(block.axes);
      return [...block.axes, ...block.axes.map((a, i) => rates[i] ?? `v_${a}`), ...block.axes.map((a, i) => accels[i] ?? `a_${a}`)];
    }
    default: {
      const never: never = block;
      return never;
    }
  }
}

/** The state names of a model in state-vector order (composite blocks end to end). */
export function modelStateNames(model: DeepReadonly<ModelConfig>): string[] {
  return model.type === 'composite' ? model.blocks.flatMap(blockStateNames) : blockStateNames(model);
}
