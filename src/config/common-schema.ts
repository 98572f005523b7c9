/**
 * Small schema pieces shared by the config sections: names, numbers with units, matrices and
 * topic patterns. Messages are written for the person editing the file.
 */
import { z } from 'zod';
import { compileTopicPattern, TopicPatternError } from '../engine/topic-pattern.js';

/** An estimator or sensor name: `[a-z][a-z0-9-]*`, e.g. `tanks`, `gnss`, `wheel-left`. */
export const identifierSchema = z
  .string()
  .regex(/^[a-z][a-z0-9-]*$/, {
    error: 'expected a name of lowercase letters, digits and "-", starting with a letter',
  });

/** A state name: `[A-Za-z_][A-Za-z0-9_]*`, e.g. `level`, `level_rate`, `v_east`. */
export const stateNameSchema = z
  .string()
  .regex(/^[A-Za-z_][A-Za-z0-9_]*$/, {
    error: 'expected a state name of letters, digits and "_", not starting with a digit',
  });

/** A finite number > 0. */
export const positiveSchema = z.number().positive();

/** A finite number ≥ 0. */
export const nonNegativeSchema = z.number().nonnegative();

/** An integer ≥ 1. */
export const countSchema = z.number().int().min(1);

/** A TCP port; 0 asks the operating system for a free one (tests). */
export const portSchema = z.number().int().min(0).max(65535);

/** An error option for a union: `required` when the field is absent, else `expected`. */
export function unionError(expected: string): { error: (issue: { input?: unknown }) => string } {
  return { error: (issue) => (issue.input === undefined ? 'required' : expected) };
}

/** One positive number for every entry, or a list with one positive number per entry. */
export const positiveOrListSchema = z.union(
  [positiveSchema, z.array(positiveSchema).min(1)],
  unionError('expected a positive number or a list of positive numbers'),
);

/** A matrix as a list of rows, e.g. `[[1, 0], [0, 1]]`. */
export const matrixSchema = z.array(z.array(z.number()).min(1)).min(1);

/** A matrix given as rows of numbers. */
export type MatrixRows = z.output<typeof matrixSchema>;

/**
 * Checks a rows×cols matrix and returns null when it fits, or a message such as
 * `expected 2×2, got 2×3` or `expected 2×2, got a ragged matrix (row 1 has 3 entries, row 0 has 2)`.
 */
export function matrixShapeProblem(m: readonly (readonly number[])[], rows: number, cols: number): string | null {
  const width = m[0]?.length ?? 0;
  const ragged = m.findIndex((row) => row.length !== width);
  if (ragged >= 0) {
    return `expected ${rows}×${cols}, got a ragged matrix (row ${ragged} has ${m[ragged]!.length} entries, row 0 has ${width})`;
  }
  if (m.length !== rows || width !== cols) return `expected ${rows}×${cols}, got ${m.length}×${width}`;
  return null;
}

/** The wildcard names of a topic pattern, or the problem with the pattern. */
export function topicWildcards(pattern: string): { ok: true; names: readonly string[] } | { ok: false; problem: string } {
  try {
    return { ok: true, names: compileTopicPattern(pattern).keyNames };
  } catch (err) {
    if (err instanceof TopicPatternError) return { ok: false, problem: err.problem };
    throw err;
  }
}

/** A subscription pattern with named wildcards, e.g. `yard/{vehicle}/gnss`. */
export const topicPatternSchema = z.string().superRefine((pattern, ctx) => {
  const result = topicWildcards(pattern);
  if (!result.ok) ctx.addIssue({ code: 'custom', message: `topic pattern ${result.problem}` });
});

/**
 * A publish topic template, e.g. `statecast/{estimator}/{entity}/estimate`: literal levels and
 * whole-level `{placeholders}`, no MQTT wildcards. Which placeholders are allowed depends on the
 * estimator's sensors and is checked there.
 */
export const topicTemplateSchema = z.string().min(1).superRefine((template, ctx) => {
  if (/[+#]/.test(template)) {
    ctx.addIssue({ code: 'custom', message: 'a publish topic cannot hold the MQTT wildcards "+" or "#"' });
  } else if (template.split('/').some((level) => level === '')) {
    ctx.addIssue({ code: 'custom', message: 'a publish topic cannot have an empty level' });
  }
});

/** The placeholder names of a topic template: `a/{estimator}/{entity}` → `['estimator', 'entity']`. */
export function templatePlaceholders(template: string): string[] {
  return [...template.matchAll(/\{([^{}]*)\}/g)].map((m) => m[1]!);
}

/** MQTT quality of service for subscriptions. */
export const subscribeQosSchema = z.union([z.literal(0), z.literal(1), z.literal(2)], unionError('expected 0, 1 or 2'));
