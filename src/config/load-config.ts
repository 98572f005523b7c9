/**
 * The configuration edge: read a YAML or JSON file (or take an object), apply environment
 * overrides, validate against the schema reporting every issue by path, and deep-freeze.
 * It never throws for bad input; it returns the issues.
 */
import { readFileSync } from 'node:fs';
import { extname } from 'node:path';
import { parseDocument } from 'yaml';
import { z } from 'zod';
import type { ConfigIssue } from './config-error.js';
import { configSchema, type Config } from './config-schema.js';
import { deepFreeze, type DeepReadonly } from './deep-freeze.js';
import { applyEnvOverrides } from './env-overrides.js';
import { plainErrorMap, toConfigIssues } from './issue-messages.js';

/** The outcome of loading or parsing a configuration. */
export type ConfigResult =
  | { readonly ok: true; readonly config: DeepReadonly<Config> }
  | { readonly ok: false; readonly issues: readonly ConfigIssue[] };

/** Environment variables as `process.env` holds them. */
export type Env = Readonly<Record<string, string | undefined>>;

function failed(message: string): ConfigResult {
  return { ok: false, issues: [{ path: '', message }] };
}

function parseYaml(text: string): { value: unknown } | { issues: ConfigIssue[] } {
  const doc = parseDocument(text, { uniqueKeys: true, prettyErrors: true });
  if (doc.errors.length > 0) {
    return {
      issues: doc.errors.map((err) => {
        const at = err.linePos?.[0];
        const where = at === undefined ? '' : ` at line ${at.line}, column ${at.col}`;
        const what = err.message.split(/ at line \d+/)[0]!.trim();
        return { path: '', message: `YAML syntax error${where}: ${what}` };
      }),
    };
  }
  try {
    return { value: doc.toJS({ maxAliasCount: 1000 }) };
  } catch (err) {
    return { issues: [{ path: '', message: `YAML error: ${(err as Error).message}` }] };
  }
}

function parseJson(text: string): { value: unknown } | { issues: ConfigIssue[] } {
  try {
    return { value: JSON.parse(text) };
  } catch (err) {
    const message = (err as Error).message.replace(/\s*\(line \d+ column \d+\)/, '');
    const position = /at position (\d+)/.exec(message);
    let where = '';
    if (position !== null) {
      const before = text.slice(0, Number(position[1]));
      const line = before.split('\n').length;
      where = ` at line ${line}, column ${before.length - before.lastIndexOf('\n')}`;
    }
    return { issues: [{ path: '', message: `JSON syntax error${where}: ${message.replace(/ in JSON at position \d+/, '')}` }] };
  }
}

/**
 * Validates an in-memory configuration (e.g. the built-in demo) after applying `env`
 * overrides. The input is not changed; the returned config is a new, deep-frozen object.
 */
export function parseConfig(raw: unknown, env: Env): ConfigResult {
  if (raw === null || raw === undefined) return failed('the configuration is empty');
  const { value, applied } = applyEnvOverrides(raw, env);
  const result = configSchema.safeParse(value, { error: plainErrorMap });
  if (result.success) return { ok: true, config: deepFreeze(result.data) };
  const issues = toConfigIssues(result.error.issues).map((issue) => {
    const variable = applied.get(issue.path);
    return variable === undefined ? issue : { path: issue.path, message: `${issue.message} (from ${variable})` };
  });
  return { ok: false, issues };
}

/**
 * Reads a configuration file (`.yaml`, `.yml` or `.json`), applies `env` overrides (see
 * ENV_OVERRIDES), validates and deep-freezes it. Syntax errors are reported with line and
 * column.
 */
export function loadConfig(path: string, env: Env): ConfigResult {
  const ext = extname(path).toLowerCase();
  if (ext !== '.yaml' && ext !== '.yml' && ext !== '.json') {
    return failed(`cannot tell the format of "${path}"; use a .yaml, .yml or .json file`);
  }
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    return failed(`cannot read "${path}"${code === 'ENOENT' ? ': no such file' : `: ${(err as Error).message}`}`);
  }
  const parsed = ext === '.json' ? parseJson(text) : parseYaml(text);
  return 'issues' in parsed ? { ok: false, issues: parsed.issues } : parseConfig(parsed.value, env);
}

/** The configuration's JSON Schema (draft 2020-12), describing the file as written. */
export function configJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(configSchema, { io: 'input', target: 'draft-2020-12' });
  return { ...schema, title: 'statecast configuration' };
}
