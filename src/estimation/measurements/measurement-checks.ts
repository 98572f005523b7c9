/**
 * Construction-time validators shared by the measurement models. Every failure is a
 * ModelConfigError naming the field, the expectation and the value found.
 */
import { ModelConfigError } from '../model-config-error.js';

/** Returns `value` when it is an integer ≥ 1; throws `stateDim must be a positive integer, got 0` otherwise. */
export function checkStateDim(value: number, name = 'stateDim'): number {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < 1) {
    throw new ModelConfigError(name, `${name} must be a positive integer, got ${String(value)}`);
  }
  return value;
}

/**
 * Checks the indices of the state components a sensor reads: one of the allowed counts, each an
 * integer in [0, stateDim), no index twice. Returns a frozen copy.
 */
export function checkStateIndices(
  name: string,
  indices: readonly number[],
  allowedCounts: readonly number[],
  stateDim: number,
): readonly number[] {
  const counts = allowedCounts.join(' or ');
  if (!Array.isArray(indices) || !allowedCounts.includes(indices.length)) {
    const got = Array.isArray(indices) ? `${indices.length} entries` : String(indices);
    throw new ModelConfigError(name, `${name} must have ${counts} entries, got ${got}`);
  }
  indices.forEach((v, i) => {
    if (typeof v !== 'number' || !Number.isInteger(v) || v < 0 || v >= stateDim) {
      throw new ModelConfigError(`${name}[${i}]`, `${name}[${i}] must be an integer state index in [0, ${stateDim - 1}], got ${String(v)}`);
    }
    if (indices.indexOf(v) !== i) {
      throw new ModelConfigError(`${name}[${i}]`, `${name}[${i}] must differ from the other indices, got ${v} twice`);
    }
  });
  return Object.freeze([...indices]);
}
