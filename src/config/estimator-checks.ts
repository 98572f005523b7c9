/**
 * Checks across an estimator's fields that no single field can make: every state a sensor,
 * the prior or the health limits name exists in the model; all sensors name the same topic
 * wildcards (they identify the same entities); publish templates use only known placeholders;
 * a plain KF gets only linear sensors. Each issue carries the path of the offending field.
 */
import type { z } from 'zod';
import { matrixShapeProblem, templatePlaceholders, topicWildcards } from './common-schema.js';
import type { estimatorFieldsSchema } from './estimator-schema.js';
import { isLinearMeasurement, statesReadBy } from './measurement-schema.js';
import { modelStateNames } from './model-schema.js';

type Estimator = z.output<typeof estimatorFieldsSchema>;
type Ctx = z.RefinementCtx;
type Path = (string | number)[];

/** Placeholders every publish template may use besides the sensors' wildcard names. */
export const BUILT_IN_PLACEHOLDERS: readonly string[] = ['estimator', 'entity'];

function issue(ctx: Ctx, path: Path, message: string): void {
  ctx.addIssue({ code: 'custom', path, message });
}

function braces(names: readonly string[]): string {
  return names.length === 0 ? 'no wildcards' : names.map((n) => `{${n}}`).join(', ');
}

function checkStateNames(e: Estimator, ctx: Ctx, states: ReadonlySet<string>): void {
  const known = [...states].join(', ');
  const check = (path: Path, state: string) => {
    if (!states.has(state)) issue(ctx, path, `unknown state "${state}"; the model has ${known}`);
  };
  for (const state of Object.keys(e.prior.mean)) check(['prior', 'mean', state], state);
  for (const state of Object.keys(e.prior.sigma)) check(['prior', 'sigma', state], state);
  for (const state of Object.keys(e.health.sigmaLimits ?? {})) check(['health', 'sigmaLimits', state], state);
  for (const [name, sensor] of Object.entries(e.sensors)) {
    const base = ['sensors', name, 'measurement'];
    for (const read of statesReadBy(sensor.measurement)) check([...base, ...read.path], read.state);
    const m = sensor.measurement;
    if (m.type === 'linear' && m.C !== undefined) {
      const problem = matrixShapeProblem(m.C, m.C.length, states.size);
      if (problem !== null) issue(ctx, [...base, 'C'], `${problem} (one column per state: ${known})`);
    }
  }
}

/** Checks the sensors' wildcards agree and returns them (null when no sensor pattern is valid). */
function checkWildcards(e: Estimator, ctx: Ctx): readonly string[] | null {
  let first: { sensor: string; names: readonly string[] } | null = null;
  for (const [sensor, s] of Object.entries(e.sensors)) {
    const result = topicWildcards(s.topic);
    if (!result.ok) continue;
    const path = ['sensors', sensor, 'topic'];
    const reserved = result.names.filter((n) => BUILT_IN_PLACEHOLDERS.includes(n));
    if (reserved.length > 0) issue(ctx, path, `wildcard name ${braces(reserved)} is reserved for publish topics`);
    if (first === null) {
      first = { sensor, names: result.names };
      continue;
    }
    const same = new Set(first.names);
    if (result.names.length !== same.size || result.names.some((n) => !same.has(n))) {
      issue(
        ctx,
        path,
        `uses ${braces(result.names)} but sensor "${first.sensor}" uses ${braces(first.names)}; ` +
          'every sensor of an estimator must name the same wildcards',
      );
    }
  }
  return first?.names ?? null;
}

function checkTemplate(ctx: Ctx, path: Path, template: string | undefined, wildcards: readonly string[]): void {
  if (template === undefined) return;
  const allowed = [...BUILT_IN_PLACEHOLDERS, ...wildcards];
  const used = templatePlaceholders(template);
  const unknown = used.filter((p) => !allowed.includes(p));
  if (unknown.length > 0) {
    issue(ctx, path, `unknown placeholder ${braces(unknown)}; use ${braces(allowed)}`);
  } else if (!used.includes('entity') && !wildcards.every((w) => used.includes(w))) {
    issue(ctx, path, `needs {entity} or all of ${braces(wildcards)}, or every entity would publish to the same topic`);
  }
}

/** The estimator's cross-field checks, as a zod superRefine. */
export function checkEstimator(e: Estimator, ctx: Ctx): void {
  const sensorNames = Object.keys(e.sensors);
  if (sensorNames.length === 0) issue(ctx, ['sensors'], 'expected at least one sensor');
  checkStateNames(e, ctx, new Set(modelStateNames(e.model)));
  if (e.filter.kind === 'kf') {
    const nonlinear = sensorNames.filter((n) => !isLinearMeasurement(e.sensors[n]!.measurement));
    if (nonlinear.length > 0) {
      const list = nonlinear.map((n) => `"${n}" (${e.sensors[n]!.measurement.type})`).join(', ');
      issue(ctx, ['filter', 'kind'], `kf needs linear sensors, but ${list} is not; use ekf or ukf`);
    }
  }
  const wildcards = checkWildcards(e, ctx);
  if (wildcards !== null) {
    checkTemplate(ctx, ['publish', 'topic'], e.publish.topic, wildcards);
    checkTemplate(ctx, ['publish', 'smoothedTopic'], e.publish.smoothedTopic, wildcards);
  }
  if (e.smoothing.lagSteps > e.history.maxEntries) {
    issue(ctx, ['smoothing', 'lagSteps'], `expected at most history.maxEntries (${e.history.maxEntries})`);
  }
  if (e.publish.smoothedTopic !== undefined && e.smoothing.lagSteps === 0) {
    issue(ctx, ['publish', 'smoothedTopic'], 'set, but smoothing is off (smoothing.lagSteps is 0)');
  }
}
