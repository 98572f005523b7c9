import { PayloadDecoderSpecError } from './payload-decoder-spec.js';

/**
 * Field paths into parsed JSON: `pos.lat`, `fix[0]`, `[2]`, `gnss.fix[1].lon`.
 * A path compiles once into segments (a string for an object key, a number for an array index);
 * lookups read own properties only, so keys such as `__proto__`, `constructor` or `prototype`
 * can never reach Object.prototype.
 */

/** A compiled field path. */
export interface JsonFieldPath {
  /** The path as written. */
  readonly path: string;
  /** Keys (strings) and array indices (numbers), outermost first. */
  readonly segments: readonly (string | number)[];
}

/** Returned by lookupJsonField when a key or array entry along the path is absent. */
export const FIELD_MISSING: unique symbol = Symbol('field-missing');
/** Returned by lookupJsonField when a step meets a value that is not the object or array it needs. */
export const FIELD_NOT_CONTAINER: unique symbol = Symbol('field-not-container');

/** Compiles a path; throws PayloadDecoderSpecError naming the path and the problem. */
export function compileJsonFieldPath(path: string): JsonFieldPath {
  const segments: (string | number)[] = [];
  let i = 0;
  while (i < path.length) {
    const c = path[i];
    if (c === '[') {
      const close = path.indexOf(']', i);
      const digits = close === -1 ? '' : path.slice(i + 1, close);
      if (!/^(0|[1-9][0-9]{0,8})$/.test(digits)) {
        throw pathError(path, `"[${digits}" at offset ${i} is not an index like [0]`);
      }
      segments.push(Number(digits));
      i = close + 1;
      continue;
    }
    if (c === '.') {
      if (segments.length === 0) throw pathError(path, 'starts with "."');
      i += 1;
    } else if (segments.length > 0) {
      throw pathError(path, `expected "." or "[" at offset ${i}`);
    }
    let end = i;
    while (end < path.length && !'.[]'.includes(path[end]!)) end += 1;
    if (end === i) throw pathError(path, `has an empty key at offset ${i}`);
    segments.push(path.slice(i, end));
    i = end;
  }
  if (segments.length === 0) throw pathError(path, 'is empty');
  return { path, segments };
}

/**
 * The value at a path, FIELD_MISSING when a key or index is absent, or FIELD_NOT_CONTAINER when
 * a step meets a value of the wrong kind (an index into an object, a key into an array or number).
 */
export function lookupJsonField(
  root: unknown,
  path: JsonFieldPath,
): unknown {
  let node: unknown = root;
  const segments = path.segments;
  for (let i = 0; i < segments.length; i++) {
    const segment = segments[i]!;
    if (typeof segment === 'number') {
      if (!Array.isArray(node)) return FIELD_NOT_CONTAINER;
      if (segment >= node.length) return FIELD_MISSING;
      node = node[segment];
    } else {
      if (typeof node !== 'object' || node === null || Array.isArray(node)) {
        return FIELD_NOT_CONTAINER;
      }
      if (!Object.hasOwn(node, segment)) return FIELD_MISSING;
      node = (node as Record<string, unknown>)[segment];
    }
  }
  return node;
}

function pathError(path: string, problem: string): PayloadDecoderSpecError {
  return new PayloadDecoderSpecError(`field path ${JSON.stringify(path)} ${problem}`);
}
