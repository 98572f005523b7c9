/**
 * Turns zod issues into ConfigIssues with plain messages: `required`, `expected a positive
 * number`, `unknown key "sigmma" (did you mean "sigma"?)`. Messages written by the schema
 * itself (custom errors and refinements) pass through unchanged.
 */
import type { z } from 'zod';
import { formatIssuePath, type ConfigIssue } from './config-error.js';

type RawIssue = z.core.$ZodRawIssue;

const TYPE_WORDS: Record<string, string> = {
  object: 'an object',
  record: 'an object',
  array: 'a list',
  tuple: 'a list',
  string: 'a string',
  number: 'a number',
  int: 'an integer',
  boolean: 'true or false',
};

function describeValue(value: unknown): string {
  if (value === null) return 'null';
  if (Array.isArray(value)) return 'a list';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : 'a number that is not finite';
  if (typeof value === 'string') return value.length <= 40 ? JSON.stringify(value) : 'a string';
  if (typeof value === 'object') return 'an object';
  return String(value);
}

/** True when the number schema behind a bound issue also requires an integer. */
function isIntegerSchema(issue: RawIssue): boolean {
  const checks = (issue.schema?._zod.def as { checks?: { _zod: { def: { format?: unknown } } }[] } | undefined)?.checks ?? [];
  return checks.some((c) => c._zod.def.format === 'safeint' || c._zod.def.format === 'int32');
}

function bound(issue: RawIssue & { origin: string; inclusive?: boolean }, limit: unknown, lower: boolean): string {
  const n = String(limit);
  switch (issue.origin) {
    case 'array':
    case 'set':
      return `expected ${lower ? 'at least' : 'at most'} ${n} ${n === '1' ? 'entry' : 'entries'}`;
    case 'string':
      return `expected ${lower ? 'at least' : 'at most'} ${n} ${n === '1' ? 'character' : 'characters'}`;
    default: {
      const kind = isIntegerSchema(issue) ? 'an integer' : 'a number';
      if (lower && limit === 0 && issue.inclusive !== true) return `expected ${kind === 'an integer' ? 'a positive integer' : 'a positive number'}`;
      const op = lower ? (issue.inclusive === false ? '>' : '≥') : issue.inclusive === false ? '<' : '≤';
      return `expected ${kind} ${op} ${n}`;
    }
  }
}

function editDistance(a: string, b: string): number {
  let prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const row = [i];
    for (let j = 1; j <= b.length; j++) {
      row[j] = Math.min(prev[j]! + 1, row[j - 1]! + 1, prev[j - 1]! + (a[i - 1] === b[j - 1] ? 0 : 1));
    }
    prev = row;
  }
  return prev[b.length]!;
}

function unknownKeyMessage(key: string, known: readonly string[]): string {
  const lower = key.toLowerCase();
  const close = known
    .map((k) => ({ k, d: editDistance(lower, k.toLowerCase()) }))
    .filter(({ k, d }) => d <= Math.max(1, Math.floor(k.length / 3)))
    .sort((x, y) => x.d - y.d)[0];
  return close === undefined ? `unknown key "${key}"` : `unknown key "${key}" (did you mean "${close.k}"?)`;
}

/**
 * The per-parse zod error map. An unrecognized_keys issue gets one line per key, which
 * `toConfigIssues` splits into separate issues.
 */
export function plainErrorMap(issue: RawIssue): string | undefined {
  switch (issue.code) {
    case 'invalid_type': {
      if (issue.input === undefined) return 'required';
      const expected = TYPE_WORDS[issue.expected] ?? issue.expected;
      if (typeof issue.input === 'number' && !Number.isFinite(issue.input)) return `expected ${expected}, got a number that is not finite`;
      return `expected ${expected}, got ${describeValue(issue.input)}`;
    }
    case 'too_small':
      return bound(issue, issue.minimum, true);
    case 'too_big':
      return bound(issue, issue.maximum, false);
    case 'invalid_value': {
      const values = issue.values.map((v) => JSON.stringify(v));
      return values.length === 1 ? `expected ${values[0]}` : `expected one of ${values.join(', ')}`;
    }
    case 'unrecognized_keys': {
      const shape = (issue.inst?._zod.def as { shape?: Record<string, unknown> } | undefined)?.shape ?? {};
      return issue.keys.map((k) => unknownKeyMessage(k, Object.keys(shape))).join('\n');
    }
    case 'invalid_union': {
      const options = (issue as { options?: unknown[] }).options;
      if (Array.isArray(options)) return `expected one of ${options.map((o) => JSON.stringify(o)).join(', ')}`;
      return undefined;
    }
    default:
      return undefined;
  }
}

/** Converts finished zod issues (parsed with plainErrorMap) into ConfigIssues. */
export function toConfigIssues(issues: readonly z.core.$ZodIssue[]): ConfigIssue[] {
  const out: ConfigIssue[] = [];
  for (const issue of issues) {
    const path = formatIssuePath(issue.path);
    if (issue.code === 'unrecognized_keys') {
      for (const message of issue.message.split('\n')) out.push({ path, message });
    } else if (issue.code === 'invalid_key') {
      out.push({ path, message: `invalid name: ${issue.issues[0]?.message ?? issue.message}` });
    } else {
      out.push({ path, message: issue.message });
    }
  }
  return out;
}
