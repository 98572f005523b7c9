/**
 * MQTT topic-filter matching (MQTT 3.1.1 §4.7 and 5.0 §4.7): `+` matches one level, a trailing
 * `#` this level and everything below, and a topic starting with `$` is matched by no filter
 * that starts with a wildcard. A shared subscription `$share/{group}/{filter}` matches as
 * its filter. Used to count recorded messages per subscription.
 */

/** A compiled filter: its levels, without a `$share/group/` prefix. */
export interface TopicFilter {
  readonly filter: string;
  readonly levels: readonly string[];
}

/** Compiles a filter (validated by the broker; here only split). */
export function compileTopicFilter(filter: string): TopicFilter {
  const levels = filter.split('/');
  if (levels[0] === '$share' && levels.length > 2) levels.splice(0, 2);
  return { filter, levels };
}

/** True when the topic matches the filter. */
export function topicMatches(f: TopicFilter, topic: string): boolean {
  const levels = f.levels;
  if (topic.startsWith('$') && (levels[0] === '+' || levels[0] === '#')) return false;
  let start = 0;
  for (let i = 0; i < levels.length; i++) {
    const level = levels[i]!;
    if (level === '#') return true;
    if (start > topic.length) return false;
    let end = topic.indexOf('/', start);
    if (end < 0) end = topic.length;
    if (level !== '+' && topic.slice(start, end) !== level) return false;
    start = end + 1;
  }
  return start > topic.length;
}
