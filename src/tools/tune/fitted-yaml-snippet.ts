/**
 * The fitted values as a YAML fragment of the estimator, ready to paste over the config's own
 * keys: `model.q` → `model:\n  q: 0.00203`. Where a path runs through a list (a composite's
 * blocks, a per-axis q), the whole list is written, taken from the config with the fitted
 * entries replaced, because YAML cannot name one list entry by its index.
 */
import { Scalar, stringify } from 'yaml';
import { parseParameterPath, readParameterPath } from '../../config/tune-schema.js';
import type { FrozenEstimatorConfig } from './config-patch.js';

/** A value rounded to `digits` significant figures (default 3). */
export function roundSignificant(value: number, digits = 3): number {
  return Number.isFinite(value) && value !== 0 ? Number(value.toPrecision(digits)) : value;
}

type Node = Record<string, unknown> | unknown[];

/**
 * The nested object holding the fitted `values` (path → value, rounded to 3 significant
 * figures) and, for paths through lists, the rest of those lists from `config`.
 */
export function fittedSnippetObject(config: FrozenEstimatorConfig, values: ReadonlyMap<string, number>): Record<string, unknown> {
  const root: Record<string, unknown> = {};
  for (const [path, value] of values) {
    const segments = parseParameterPath(path);
    if (segments === null || segments.length === 0) continue;
    let at: Node = root;
    for (let k = 0; k < segments.length - 1; k++) {
      const seg = segments[k]!;
      const nextIsIndex = typeof segments[k + 1] === 'number';
      const holder = at as Record<PropertyKey, unknown>;
      if (holder[seg] === undefined) {
        // The first list on the path is copied whole from the config; objects are built sparse.
        holder[seg] = nextIsIndex ? structuredClone(readParameterPath(config, segments.slice(0, k + 1))) : {};
      }
      at = holder[seg] as Node;
    }
    (at as Record<PropertyKey, unknown>)[segments[segments.length - 1]!] = roundSignificant(value);
  }
  return root;
}

/** Very small and very large numbers in exponent form, so 1.23e-6 is not written 0.00000123. */
function exponentForm(_key: unknown, value: unknown): unknown {
  if (typeof value !== 'number' || value === 0 || !Number.isFinite(value)) return value;
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-3 && magnitude < 1e6) return value;
  const node = new Scalar(value);
  node.format = 'EXP';
  return node;
}

/** The YAML text of `fittedSnippetObject` (block style, two-space indents). */
export function fittedYamlSnippet(config: FrozenEstimatorConfig, values: ReadonlyMap<string, number>): string {
  return stringify(fittedSnippetObject(config, values), exponentForm, { indent: 2, lineWidth: 0 });
}
