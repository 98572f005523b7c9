import { createHash } from 'node:crypto';

/**
 * A SHA-256 (hex) of the estimators' configuration, written into each checkpoint so that a file
 * written under another configuration is detected and set aside rather than restored into
 * estimators it no longer fits. The input is serialized as JSON with object keys sorted at
 * every level, so the same configuration always gives the same fingerprint whatever the key
 * order it was loaded in. Pass what shapes a track (models, sensors, history and health
 * settings), not what does not (ports, log levels), or every unrelated edit discards the tracks.
 * Throws TypeError for a cyclic value (a programmer error: configurations are trees).
 */
export function configFingerprint(estimatorConfigs: unknown): string {
  return createHash('sha256').update(stableJson(estimatorConfigs, new Set())).digest('hex');
}

/**
 * JSON.stringify's rules with sorted keys, except that non-finite numbers are written as the
 * strings "NaN", "Infinity", "-Infinity" (JSON.stringify would make all three null, so changing
 * one into another would not change the fingerprint) and typed arrays as arrays.
 */
function stableJson(value: unknown, ancestors: Set<object>): string {
  if (typeof value === 'number') return Number.isFinite(value) ? JSON.stringify(value) : JSON.stringify(String(value));
  if (typeof value === 'bigint') return JSON.stringify(value.toString());
  if (typeof value !== 'object' || value === null) return JSON.stringify(value) ?? 'null';
  const withJson = value as { toJSON?: unknown };
  if (typeof withJson.toJSON === 'function') return stableJson((withJson.toJSON as () => unknown).call(value), ancestors);
  if (ancestors.has(value)) throw new TypeError('configFingerprint: the configuration is cyclic');
  ancestors.add(value);
  let out: string;
  if (Array.isArray(value) || ArrayBuffer.isView(value)) {
    const items = Array.from(value as ArrayLike<unknown>, (v) => (isSkipped(v) ? 'null' : stableJson(v, ancestors)));
    out = `[${items.join(',')}]`;
  } else {
    const record = value as Record<string, unknown>;
    const keys = Object.keys(record).filter((k) => !isSkipped(record[k])).sort();
    out = `{${keys.map((k) => `${JSON.stringify(k)}:${stableJson(record[k], ancestors)}`).join(',')}}`;
  }
  ancestors.delete(value);
  return out;
}

function isSkipped(v: unknown): boolean {
  return v === undefined || typeof v === 'function' || typeof v === 'symbol';
}
