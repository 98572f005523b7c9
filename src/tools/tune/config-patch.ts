/**
 * Candidate configs for a tuning run: the estimator's validated config with each free parameter
 * set to a candidate value and validated again by the estimator schema, so a candidate the
 * daemon would refuse (a non-positive σ, a path that names nothing) is refused here too.
 */
import type { ConfigIssue } from '../../config/config-error.js';
import { formatIssuePath } from '../../config/config-error.js';
import type { EstimatorConfig } from '../../config/config-schema.js';
import { deepFreeze, type DeepReadonly } from '../../config/deep-freeze.js';
import { estimatorSchema } from '../../config/estimator-schema.js';
import { plainErrorMap, toConfigIssues } from '../../config/issue-messages.js';
import { parseParameterPath, readParameterPath, type ParameterPathSegment } from '../../config/tune-schema.js';

/** A validated, frozen estimator config. */
export type FrozenEstimatorConfig = DeepReadonly<EstimatorConfig>;

/** The outcome of patching: the new config, or every issue found (paths relative to the estimator). */
export type PatchResult =
  | { readonly ok: true; readonly config: FrozenEstimatorConfig }
  | { readonly ok: false; readonly issues: readonly ConfigIssue[] };

/** Sets a number at a parsed path that already holds a number; false when it does not. */
function setNumberAt(root: unknown, segments: readonly ParameterPathSegment[], value: number): boolean {
  if (segments.length === 0) return false;
  const parent = readParameterPath(root, segments.slice(0, -1));
  const leaf = segments[segments.length - 1]!;
  if (typeof parent !== 'object' || parent === null) return false;
  if (typeof (parent as Record<PropertyKey, unknown>)[leaf] !== 'number') return false;
  (parent as Record<PropertyKey, unknown>)[leaf] = value;
  return true;
}

/**
 * Validates a plain estimator object with the estimator schema (plain-word messages, issue
 * paths relative to the estimator) and deep-freezes the result.
 */
export function validateEstimatorConfig(raw: unknown): PatchResult {
  const result = estimatorSchema.safeParse(raw, { error: plainErrorMap });
  if (result.success) return { ok: true, config: deepFreeze(result.data) };
  return { ok: false, issues: toConfigIssues(result.error.issues) };
}

/**
 * A copy of `config` with each path of `values` (e.g. `model.blocks[0].q` → 0.002) set and
 * validated again. A path that does not name an existing number is an issue at that path;
 * the input config is not changed.
 */
export function patchEstimatorConfig(config: FrozenEstimatorConfig, values: ReadonlyMap<string, number>): PatchResult {
  const copy: unknown = structuredClone(config);
  const issues: ConfigIssue[] = [];
  for (const [path, value] of values) {
    const segments = parseParameterPath(path);
    if (segments === null || !setNumberAt(copy, segments, value)) {
      issues.push({ path: segments === null ? path : formatIssuePath(segments), message: 'does not name a number in this estimator' });
    }
  }
  if (issues.length > 0) return { ok: false, issues };
  return validateEstimatorConfig(copy);
}

/**
 * The config a tuning run evaluates: the gate off, because a gate makes the set of applied
 * updates depend on the parameters, so the likelihood would jump wherever a measurement crosses
 * the threshold (a discontinuous objective stalls the simplex and breaks the finite-difference
 * curvature) and a truncated innovation is no longer Gaussian; and no smoothing, which the
 * filtered likelihood does not use.
 */
export function tuningVariant(config: FrozenEstimatorConfig): PatchResult {
  const copy = structuredClone(config) as EstimatorConfig;
  copy.gate.probability = 'off';
  copy.smoothing.lagSteps = 0;
  delete copy.publish.smoothedTopic;
  return validateEstimatorConfig(copy);
}

/** The current value of a free path in a config (NaN when it does not name a number). */
export function parameterValue(config: FrozenEstimatorConfig, path: string): number {
  const segments = parseParameterPath(path);
  const value = segments === null ? undefined : readParameterPath(config, segments);
  return typeof value === 'number' ? value : Number.NaN;
}
