/**
 * Entity patterns for WebSocket subscriptions: literal text where `*` stands for any run of
 * characters (including none), e.g. `tug-*` or `tank-a`. Matching scans with indexOf instead of
 * building a regular expression, so a pattern of many stars cannot backtrack.
 */
import { MAX_CAPTURED_VALUE_LENGTH } from '../../engine/topic-pattern.js';

/** Longest entity pattern accepted (characters): no entity captured from a topic is longer. */
export const MAX_ENTITY_PATTERN_LENGTH = MAX_CAPTURED_VALUE_LENGTH;

/** True when the entity name matches. */
export type EntityMatcher = (entity: string) => boolean;

/** Characters of richer glob dialects; refused so nobody expects `?` or `[a-c]` to work. */
const OTHER_GLOB_SYNTAX = /[?[\]{}]/;
const CONTROL = /[\u0000-\u001f\u007f]/;

/** What is wrong with a pattern, in a few words, or null when it is usable. */
export function entityGlobProblem(pattern: unknown): string | null {
  if (typeof pattern !== 'string') return 'expected a string';
  if (pattern.length === 0) return 'expected a non-empty pattern';
  if (pattern.length > MAX_ENTITY_PATTERN_LENGTH) {
    return `longer than ${MAX_ENTITY_PATTERN_LENGTH} characters`;
  }
  if (CONTROL.test(pattern)) return 'contains a control character';
  const other = OTHER_GLOB_SYNTAX.exec(pattern);
  if (other !== null) return `contains ${JSON.stringify(other[0])}; only "*" is a wildcard`;
  return null;
}

/** True when the pattern has a wildcard (otherwise it names one entity exactly). */
export function isEntityGlob(pattern: string): boolean {
  return pattern.includes('*');
}

/** Compiles a pattern already checked with entityGlobProblem. */
export function compileEntityGlob(pattern: string): EntityMatcher {
  const parts = pattern.split('*');
  if (parts.length === 1) return (entity) => entity === pattern;
  const head = parts[0]!;
  const tail = parts[parts.length - 1]!;
  const middle = parts.slice(1, -1).filter((p) => p.length > 0);
  const minLength = head.length + tail.length + middle.reduce((n, p) => n + p.length, 0);
  return (entity) => {
    if (entity.length < minLength || !entity.startsWith(head) || !entity.endsWith(tail)) return false;
    // Leftmost placement of each middle part leaves the most room for the rest, so the first
    // miss is final.
    let at = head.length;
    const end = entity.length - tail.length;
    for (let i = 0; i < middle.length; i++) {
      const part = middle[i]!;
      const found = entity.indexOf(part, at);
      if (found < 0 || found + part.length > end) return false;
      at = found + part.length;
    }
    return true;
  };
}
