/**
 * Deep freezing for the validated configuration: components receive a config that nothing can
 * change after start-up, and the types say so.
 */

/** T with every property, array and nested object read-only. */
export type DeepReadonly<T> = T extends (...args: never[]) => unknown
  ? T
  : T extends object
    ? { readonly [K in keyof T]: DeepReadonly<T[K]> }
    : T;

/** Freezes `value` and everything reachable from it, in place; returns it typed read-only. */
export function deepFreeze<T>(value: T): DeepReadonly<T> {
  if (typeof value === 'object' && value !== null && !Object.isFrozen(value)) {
    Object.freeze(value);
    for (const key of Reflect.ownKeys(value)) deepFreeze((value as Record<PropertyKey, unknown>)[key]);
  }
  return value as DeepReadonly<T>;
}
