/**
 * Topic patterns with named wildcards, e.g. `yard/{vehicle}/gnss` or `plant/{site}/{tank}/level`.
 *
 * A pattern compiles once into the MQTT subscription filter (each `{name}` becomes `+`) and a
 * matcher that returns the captured levels in order. Matching scans the topic with indexOf and
 * never splits it, because it runs for every message received.
 */

/** Longest captured level accepted (characters); longer values make `match` return null. */
export const MAX_CAPTURED_VALUE_LENGTH = 128;

/** Thrown by `compileTopicPattern` for a malformed pattern (a configuration error, not bad data). */
export class TopicPatternError extends Error {
  override name = 'TopicPatternError';
  /** The pattern as written in the configuration. */
  readonly pattern: string;
  /** What is wrong with it, in a few words. */
  readonly problem: string;

  constructor(pattern: string, problem: string) {
    super(`topic pattern ${JSON.stringify(pattern)}: ${problem}`);
    this.pattern = pattern;
    this.problem = problem;
  }
}

/** A compiled topic pattern. */
export interface TopicPattern {
  /** The pattern as written, e.g. `yard/{vehicle}/gnss`. */
  readonly pattern: string;
  /** The MQTT filter to subscribe with, e.g. `yard/+/gnss`. */
  readonly subscriptionFilter: string;
  /** Wildcard names in the order they appear, e.g. `['vehicle']`. */
  readonly keyNames: readonly string[];
  /**
   * The captured levels in order, or null when the topic does not match or a captured level is
   * empty, longer than MAX_CAPTURED_VALUE_LENGTH or holds a control character.
   */
  match(topic: string): string[] | null;
}

const NAME_RE = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** One level of a pattern: literal text, or the name of a wildcard. */
interface Level {
  readonly text: string;
  readonly isWildcard: boolean;
}

/** Compiles a pattern; throws TopicPatternError naming the pattern and the problem. */
export function compileTopicPattern(pattern: string): TopicPattern {
  const levels = parseLevels(pattern);
  const keyNames = levels.filter((l) => l.isWildcard).map((l) => l.text);
  if (keyNames.length === 0) {
    throw new TopicPatternError(pattern, 'has no named wildcard such as {vehicle}');
  }
  const subscriptionFilter = levels.map((l) => (l.isWildcard ? '+' : l.text)).join('/');
  const captureCount = keyNames.length;
  return {
    pattern,
    subscriptionFilter,
    keyNames,
    match: (topic: string): string[] | null => matchLevels(levels, captureCount, topic),
  };
}

/**
 * The entity key of a set of captured values: the values joined with '/'.
 * Captured values are single topic levels and so never contain '/', which makes the key
 * unambiguous for a given pattern (`['site-1', 'tank-a']` → `site-1/tank-a`).
 */
export function entityKeyOf(values: readonly string[]): string {
  return values.join('/');
}

function parseLevels(pattern: string): Level[] {
  if (pattern.length === 0) throw new TopicPatternError(pattern, 'is empty');
  const seen = new Set<string>();
  return pattern.split('/').map((raw, index): Level => {
    if (raw.length === 0) throw new TopicPatternError(pattern, `level ${index + 1} is empty`);
    if (raw.includes('+') || raw.includes('#')) {
      throw new TopicPatternError(
        pattern,
        `level ${index + 1} ("${raw}") uses an MQTT wildcard; name it instead, e.g. {vehicle}`,
      );
    }
    if (hasControlCharacter(raw, 0, raw.length)) {
      throw new TopicPatternError(pattern, `level ${index + 1} holds a control character`);
    }
    const opens = raw.startsWith('{');
    const closes = raw.endsWith('}');
    if (!opens && !closes && !raw.includes('{') && !raw.includes('}')) {
      return { text: raw, isWildcard: false };
    }
    const name = raw.slice(1, -1);
    if (!opens || !closes || raw.length < 2 || name.includes('{') || name.includes('}')) {
      throw new TopicPatternError(
        pattern,
        `level ${index + 1} ("${raw}") mixes braces and text; a wildcard is a whole level like {tank}`,
      );
    }
    if (!NAME_RE.test(name)) {
      throw new TopicPatternError(
        pattern,
        `wildcard name "${name}" is not an identifier ([A-Za-z_][A-Za-z0-9_]*)`,
      );
    }
    if (seen.has(name)) throw new TopicPatternError(pattern, `wildcard name "${name}" repeats`);
    seen.add(name);
    return { text: name, isWildcard: true };
  });
}

function matchLevels(levels: readonly Level[], captureCount: number, topic: string): string[] | null {
  const values = new Array<string>(captureCount);
  let captured = 0;
  let start = 0;
  for (let i = 0; i < levels.length; i++) {
    const slash = topic.indexOf('/', start);
    const end = slash === -1 ? topic.length : slash;
    // The topic must end exactly at the last pattern level: no fewer and no more levels.
    const isLast = i === levels.length - 1;
    if (isLast !== (slash === -1)) return null;
    const level = levels[i]!;
    if (level.isWildcard) {
      const length = end - start;
      if (length === 0 || length > MAX_CAPTURED_VALUE_LENGTH) return null;
      if (hasControlCharacter(topic, start, end)) return null;
      values[captured++] = topic.slice(start, end);
    } else if (end - start !== level.text.length || !topic.startsWith(level.text, start)) {
      return null;
    }
    start = end + 1;
  }
  return values;
}

/** C0 controls, DEL and C1 controls (Unicode general category Cc). */
function hasControlCharacter(text: string, start: number, end: number): boolean {
  for (let i = start; i < end; i++) {
    const c = text.charCodeAt(i);
    if (c < 0x20 || (c >= 0x7f && c <= 0x9f)) return true;
  }
  return false;
}
