/**
 * Just enough of PromQL for checking alert rules against the daemon's metrics: the metric names
 * an expression reads, the label matchers of each selector, and the numbers a metric is
 * compared with. Not a parser of the language: string literals are read only inside `{...}`.
 */

/** One label matcher, e.g. `reason=~"no-route|bad-topic"`. */
export interface LabelMatcher {
  readonly label: string;
  readonly op: '=' | '!=' | '=~' | '!~';
  readonly value: string;
}

/** A vector selector: `name{matchers}`. */
export interface VectorSelector {
  readonly metric: string;
  readonly matchers: readonly LabelMatcher[];
}

const RESERVED = new Set([
  'sum', 'min', 'max', 'avg', 'count', 'by', 'without', 'on', 'ignoring', 'group_left', 'group_right',
  'and', 'or', 'unless', 'bool', 'offset', 'rate', 'irate', 'increase', 'delta', 'histogram_quantile',
  'clamp_min', 'clamp_max', 'absent', 'absent_over_time', 'max_over_time', 'min_over_time', 'topk', 'bottomk',
]);

/** Removes the label lists of `by (...)`, `on (...)` and friends, which hold label names, not metrics. */
function withoutGroupingLists(expr: string): string {
  return expr.replace(/\b(by|without|on|ignoring|group_left|group_right)\s*\([^)]*\)/g, '$1');
}

/** The selectors of `expr`: every metric name, with its matchers when it has braces. */
export function vectorSelectors(expr: string): VectorSelector[] {
  const out: VectorSelector[] = [];
  const re = /([a-zA-Z_:][a-zA-Z0-9_:]*)\s*(\{([^}]*)\})?/g;
  const text = withoutGroupingLists(expr).replace(/\[[^\]]*\]/g, ''); // drop range durations
  for (const m of text.matchAll(re)) {
    const name = m[1]!;
    const before = text[m.index - 1];
    if (before !== undefined && /[\w.$]/.test(before)) continue; // the tail of a number or a name
    if (RESERVED.has(name) && m[2] === undefined) continue;
    if (/^\d/.test(name)) continue;
    out.push({ metric: name, matchers: m[3] === undefined ? [] : labelMatchers(m[3]) });
  }
  return out;
}

function labelMatchers(body: string): LabelMatcher[] {
  const out: LabelMatcher[] = [];
  const re = /\s*([a-zA-Z_][a-zA-Z0-9_]*)\s*(=~|!~|!=|=)\s*"((?:[^"\\]|\\.)*)"\s*(,|$)/gy;
  let m: RegExpExecArray | null;
  let consumed = 0;
  while ((m = re.exec(body)) !== null && m[0] !== '') {
    out.push({ label: m[1]!, op: m[2] as LabelMatcher['op'], value: m[3]! });
    consumed = re.lastIndex;
  }
  if (consumed !== body.length && body.slice(consumed).trim() !== '') throw new Error(`cannot read label matchers {${body}}`);
  return out;
}

/** The label values a matcher can select: the alternatives of a regex, or the one value. */
export function matchedValues(matcher: LabelMatcher): string[] {
  return matcher.op === '=~' || matcher.op === '!~' ? matcher.value.split('|') : [matcher.value];
}

/** The numbers `metric` (with or without matchers) is compared with: `statecast_health_state == 2` gives [2]. */
export function comparedValues(expr: string, metric: string): number[] {
  const re = new RegExp(`\\b${metric}\\s*(?:\\{[^}]*\\})?\\s*(?:==|!=|>=|<=|>|<)\\s*(-?[0-9.]+)`, 'g');
  return [...expr.matchAll(re)].map((m) => Number(m[1]));
}
