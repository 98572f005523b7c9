/**
 * The optional `tune` section of an estimator: which noise parameters `statecast tune` may fit
 * by maximum likelihood, with optional bounds. A free parameter is named by a path into the
 * estimator's own config, e.g. `model.q`, `model.blocks[1].tauS` or
 * `sensors.level.measurement.sigma`; the path must exist there and hold a positive number.
 * The daemon ignores this section.
 */
import { z } from 'zod';
import { countSchema, positiveSchema } from './common-schema.js';
import type { estimatorFieldsSchema } from './estimator-schema.js';

type Estimator = z.output<typeof estimatorFieldsSchema>;
type Ctx = z.RefinementCtx;

/** One segment of a parameter path: an object key or a list index. */
export type ParameterPathSegment = string | number;

/** Keys of process-model blocks that hold a noise parameter (spectral density, Gauss–Markov τ and σ). */
export const PROCESS_NOISE_KEYS: readonly string[] = ['q', 'tauS', 'sigma'];
/** Keys of measurement models that hold a noise σ. */
export const MEASUREMENT_NOISE_KEYS: readonly string[] = ['sigma', 'sigmaM', 'sigmaRangeM', 'sigmaBearingRad', 'sigmaRad'];

const SEGMENT_RE = /^([A-Za-z_][A-Za-z0-9_-]*)((?:\[(?:0|[1-9][0-9]{0,5})\])*)$/;

/**
 * Splits `model.blocks[0].q` into `['model', 'blocks', 0, 'q']`; null when the text is not a
 * path of dot-separated keys with optional `[n]` indices.
 */
export function parseParameterPath(path: string): ParameterPathSegment[] | null {
  if (path.length === 0 || path.length > 200) return null;
  const out: ParameterPathSegment[] = [];
  for (const part of path.split('.')) {
    const m = SEGMENT_RE.exec(part);
    if (m === null) return null;
    out.push(m[1]!);
    for (const index of m[2]!.matchAll(/\[(\d+)\]/g)) out.push(Number(index[1]));
  }
  return out;
}

/** The value at a parsed path inside `root`, or undefined when some segment is absent. */
export function readParameterPath(root: unknown, segments: readonly ParameterPathSegment[]): unknown {
  let at: unknown = root;
  for (const seg of segments) {
    if (typeof seg === 'number') {
      if (!Array.isArray(at) || seg >= at.length) return undefined;
      at = at[seg];
    } else {
      if (typeof at !== 'object' || at === null || Array.isArray(at) || !Object.hasOwn(at, seg)) return undefined;
      at = (at as Record<string, unknown>)[seg];
    }
  }
  return at;
}

/**
 * One free parameter. `min` and `max` (same unit as the parameter) bound the search; absent,
 * they default to six decades below and above the configured value.
 */
export const tuneFreeSchema = z
  .strictObject({
    path: z.string(),
    min: positiveSchema.exactOptional(),
    max: positiveSchema.exactOptional(),
  })
  .superRefine((f, ctx) => {
    if (f.min !== undefined && f.max !== undefined && !(f.min < f.max)) {
      ctx.addIssue({ code: 'custom', path: ['max'], message: `expected a number > min (${f.min})` });
    }
  });

/**
 * The tune section: at least one free parameter, and the Nelder–Mead iteration budget
 * `maxIterations` (default 400, shared by the restarts).
 */
export const tuneSchema = z.strictObject({
  free: z.array(tuneFreeSchema).min(1),
  maxIterations: countSchema.default(400),
});

/** A validated tune section. */
export type TuneConfig = z.output<typeof tuneSchema>;

/** Why a parsed path cannot name a noise parameter (null when its shape is acceptable). */
function pathShapeProblem(e: Estimator, seg: readonly ParameterPathSegment[]): string | null {
  const keys = seg.filter((s): s is string => typeof s === 'string');
  const last = keys[keys.length - 1]!;
  const trailing = seg.length - seg.lastIndexOf(last) - 1;
  if (trailing > 1) return 'expected at most one list index after the parameter name';
  if (seg[0] === 'model') {
    if (!PROCESS_NOISE_KEYS.includes(last)) return `"${last}" is not a process-noise parameter; tunable are ${PROCESS_NOISE_KEYS.join(', ')}`;
    return null;
  }
  if (seg[0] === 'sensors' && typeof seg[1] === 'string' && seg[2] === 'measurement' && seg.length >= 4) {
    if (!MEASUREMENT_NOISE_KEYS.includes(last)) {
      return `"${last}" is not a measurement-noise parameter; tunable are ${MEASUREMENT_NOISE_KEYS.join(', ')}`;
    }
    const decode = e.sensors[seg[1]]?.decode;
    // A payload's own accuracy replaces the configured σ, so the likelihood would not depend on it.
    if (decode !== undefined && decode.format !== 'number' && decode.sigma !== undefined) {
      return `has no effect: sensor "${seg[1]}" reads each payload's own accuracy (decode.sigma)`;
    }
    if (decode?.format === 'json' && decode.covariance !== undefined) {
      return `has no effect: sensor "${seg[1]}" reads each payload's own covariance (decode.covariance)`;
    }
    return null;
  }
  return 'expected a path into model (process noise) or sensors.<name>.measurement (measurement noise)';
}

/**
 * Checks every free path of an estimator's tune section, as a zod superRefine on the estimator:
 * the path must parse, name a noise parameter, exist in this estimator and hold a positive
 * number, and appear once. Issues carry the path `tune.free[j].path`.
 */
export function checkTunePaths(e: Estimator, ctx: Ctx): void {
  const free = e.tune?.free;
  if (free === undefined) return;
  const seen = new Map<string, number>();
  free.forEach((f, j) => {
    const path = ['tune', 'free', j, 'path'];
    const add = (message: string) => ctx.addIssue({ code: 'custom', path, message });
    const seg = parseParameterPath(f.path);
    if (seg === null) return add('expected a path such as "model.q", "model.blocks[1].tauS" or "sensors.level.measurement.sigma"');
    const shape = pathShapeProblem(e, seg);
    if (shape !== null) return add(shape);
    const value = readParameterPath(e, seg);
    if (value === undefined) return add(`"${f.path}" does not exist in this estimator`);
    if (Array.isArray(value)) return add(`"${f.path}" is a list; name one entry, e.g. "${f.path}[0]"`);
    if (typeof value !== 'number' || !(value > 0)) return add(`"${f.path}" is not a positive number`);
    const earlier = seen.get(f.path);
    if (earlier !== undefined) return add(`duplicate path (also tune.free[${earlier}])`);
    seen.set(f.path, j);
  });
}
