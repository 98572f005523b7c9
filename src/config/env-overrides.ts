/**
 * Environment variables that override single configuration fields, for secrets and for the
 * settings a deployment changes most. An unset or empty variable changes nothing. Values are
 * validated like the file's own, and an issue about an overridden field names the variable.
 */

/** One documented override. */
export interface EnvOverride {
  /** The variable, e.g. `STATECAST_BROKER_URL`. */
  readonly name: string;
  /** The field it sets, e.g. `['broker', 'url']`. */
  readonly path: readonly [string, string];
  /** How the text is read: as is, or as a whole number (a port). */
  readonly kind: 'string' | 'integer';
  /** Applies only when the file has the section: setting the variable must not switch a mode on. */
  readonly onlyInSection?: boolean;
}

/** Every supported override. */
export const ENV_OVERRIDES: readonly EnvOverride[] = [
  { name: 'STATECAST_BROKER_URL', path: ['broker', 'url'], kind: 'string' },
  { name: 'STATECAST_BROKER_USERNAME', path: ['broker', 'username'], kind: 'string' },
  { name: 'STATECAST_BROKER_PASSWORD', path: ['broker', 'password'], kind: 'string' },
  { name: 'STATECAST_API_TOKEN', path: ['auth', 'token'], kind: 'string' },
  { name: 'STATECAST_HTTP_HOST', path: ['http', 'host'], kind: 'string' },
  { name: 'STATECAST_HTTP_PORT', path: ['http', 'port'], kind: 'integer' },
  { name: 'STATECAST_STATE_DIR', path: ['checkpoint', 'directory'], kind: 'string' },
  { name: 'STATECAST_LOG_LEVEL', path: ['log', 'level'], kind: 'string' },
  // A pod template can set these from the pod index (the downward API) instead of a host name.
  { name: 'STATECAST_SCALE_OUT_ORDINAL', path: ['scaleOut', 'ordinal'], kind: 'integer', onlyInSection: true },
  { name: 'STATECAST_SCALE_OUT_REPLICAS', path: ['scaleOut', 'replicas'], kind: 'integer', onlyInSection: true },
];

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/**
 * Returns a copy of the raw configuration with the overrides applied (the input is not
 * changed) and the variables used, keyed by the dotted field path (`broker.url`). A section
 * that is not an object is left for validation to report.
 */
export function applyEnvOverrides(
  raw: unknown,
  env: Readonly<Record<string, string | undefined>>,
): { value: unknown; applied: Map<string, string> } {
  const applied = new Map<string, string>();
  if (!isPlainObject(raw)) return { value: raw, applied };
  const root: Record<string, unknown> = { ...raw };
  for (const override of ENV_OVERRIDES) {
    const text = env[override.name];
    if (text === undefined || text === '') continue;
    const [section, field] = override.path;
    if (override.onlyInSection === true && root[section] === undefined) continue;
    const current = root[section] ?? {};
    if (!isPlainObject(current)) continue;
    const value = override.kind === 'integer' && /^\d+$/.test(text.trim()) ? Number(text.trim()) : text;
    root[section] = { ...current, [field]: value };
    applied.set(`${section}.${field}`, override.name);
  }
  return { value: root, applied };
}
