/**
 * Validators for the scalar parameters and state names of process models (construction time
 * only). Every failure is a ModelConfigError naming the field, the expectation and the value.
 */
import { ModelConfigError } from '../model-config-error.js';

/** Returns `value` when it is a finite number > 0; throws `tauS must be a positive finite number, got -1` otherwise. */
export function checkPositiveFinite(name: string, value: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || value <= 0) {
    throw new ModelConfigError(name, `${name} must be a positive finite number, got ${String(value)}`);
  }
  return value;
}

/**
 * One positive finite value per axis: a scalar applies to every axis, an array must have exactly
 * `count` entries. Returns a fresh Float64Array of length `count`.
 */
export function checkPerAxis(name: string, value: number | readonly number[], count: number): Float64Array {
  if (typeof value === 'number') {
    checkPositiveFinite(name, value);
    return new Float64Array(count).fill(value);
  }
  if (!Array.isArray(value) || value.length !== count) {
    const got = Array.isArray(value) ? `${value.length} entries` : String(value);
    throw new ModelConfigError(name, `${name} must be a number or an array of ${count} (one per axis), got ${got}`);
  }
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) out[i] = checkPositiveFinite(`${name}[${i}]`, value[i]!);
  return out;
}

/**
 * Checks a list of state names: `count` entries (when given), each a non-empty string, no
 * duplicates. Returns a frozen copy.
 */
export function checkStateNames(name: string, names: readonly string[], count?: number): readonly string[] {
  if (!Array.isArray(names) || names.length === 0) {
    throw new ModelConfigError(name, `${name} must be a non-empty array of strings, got ${String(names)}`);
  }
  if (count !== undefined && names.length !== count) {
    throw new ModelConfigError(name, `${name} must have ${count} entries, got ${names.length}`);
  }
  const seen = new Set<string>();
  names.forEach((n, i) => {
    if (typeof n !== 'string' || n.length === 0) {
      throw new ModelConfigError(`${name}[${i}]`, `${name}[${i}] must be a non-empty string, got ${JSON.stringify(n)}`);
    }
    if (seen.has(n)) throw new ModelConfigError(name, `${name} has the duplicate state name '${n}'`);
    seen.add(n);
  });
  return Object.freeze([...names]);
}
