/**
 * How configuration problems are reported: a flat list of issues, each naming the offending
 * field by a path such as `estimators[1].sensors.gnss.measurement.sigmaM` and saying in plain
 * words what was expected. Every problem found is reported, not only the first.
 */

/** One configuration problem. */
export interface ConfigIssue {
  /**
   * Where it is, e.g. `estimators[0].gate.probability`; `env.STATECAST_HTTP_PORT` for an
   * environment override; the empty string for the document as a whole (unreadable file,
   * syntax error).
   */
  readonly path: string;
  /** What is wrong, e.g. `expected a positive number` or `unknown key "sigmma"`. */
  readonly message: string;
}

/** Formats a path from its segments: `['estimators', 1, 'sensors', 'gnss']` → `estimators[1].sensors.gnss`. */
export function formatIssuePath(segments: readonly PropertyKey[]): string {
  let out = '';
  for (const segment of segments) {
    if (typeof segment === 'number') out += `[${segment}]`;
    else if (typeof segment === 'symbol') out += `[${segment.toString()}]`;
    else if (/^[A-Za-z_$][A-Za-z0-9_$-]*$/.test(segment)) out += out === '' ? segment : `.${segment}`;
    else out += `[${JSON.stringify(segment)}]`;
  }
  return out;
}

/** One line per issue, `path: message` (just the message for document-wide issues). */
export function formatConfigIssues(issues: readonly ConfigIssue[]): string {
  return issues.map((i) => (i.path === '' ? i.message : `${i.path}: ${i.message}`)).join('\n');
}

/**
 * Thrown by callers that cannot continue without a valid configuration (the CLI, or
 * `defaultDemoConfig` if the built-in config were ever broken). The loader itself never throws
 * for bad input; it returns the issues.
 */
export class ConfigError extends Error {
  /** Stable code for the daemon's error catalogue. */
  readonly code = 'CONFIG_INVALID';
  /** Every problem found. */
  readonly issues: readonly ConfigIssue[];

  /** Creates the error; the message lists every issue, one per line. */
  constructor(issues: readonly ConfigIssue[], source?: string) {
    const where = source === undefined ? 'configuration' : `configuration ${source}`;
    super(`${where} is invalid:\n${formatConfigIssues(issues)}`);
    this.name = 'ConfigError';
    this.issues = issues;
  }
}
