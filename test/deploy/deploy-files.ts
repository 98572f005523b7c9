/**
 * The deployment files under deploy/, read once for deploy-files.test.ts, and the facts about
 * the daemon they must agree with: its defaults (from the config schema), its image (from the
 * Dockerfile) and the broker configuration it ships.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parse as parseYaml, parseAllDocuments } from 'yaml';
import { parseConfig } from '../../src/config/load-config.js';
import { envAssignments, instructionsOf, parseDockerfile, runCommands } from './dockerfile-parser.js';
import { parseUnitFile } from './unit-file-parser.js';

/** The repository root. */
export const ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** A repository file's text. */
export const readRepoFile = (path: string): string => readFileSync(join(ROOT, path), 'utf8');

/** The YAML deployment files, by repository path. */
export const YAML_FILES = [
  'deploy/compose.yaml',
  'deploy/kubernetes/statecast.yaml',
  'deploy/prometheus/prometheus.yml',
  'deploy/prometheus/statecast-alerts.yaml',
] as const;

/** Every deployment file, the systemd unit included. */
export const DEPLOY_FILES = [...YAML_FILES, 'deploy/systemd/statecast.service'] as const;

/** The documents of a YAML file as plain values; throws on any error or warning. */
export function yamlDocuments(path: string): unknown[] {
  const docs = parseAllDocuments(readRepoFile(path), { uniqueKeys: true, prettyErrors: true });
  const list = Array.isArray(docs) ? docs : [docs];
  for (const doc of list) {
    const problems = [...doc.errors, ...doc.warnings];
    if (problems.length > 0) throw new Error(`${path}: ${problems.map((p) => p.message).join('; ')}`);
  }
  return list.map((doc) => doc.toJS() as unknown);
}

const defaultsResult = parseConfig(parseYaml(readRepoFile('config/minimal.yaml')), {});
if (!defaultsResult.ok) throw new Error('config/minimal.yaml does not parse');
/** The daemon's configuration defaults (config/minimal.yaml sets only an estimator). */
export const DEFAULTS = defaultsResult.config;

/** The daemon's stop deadline in seconds: src/cli.ts stops the app with `app.stop(10_000)`. */
export const STOP_DEADLINE_S = 10;

const dockerfile = parseDockerfile(readRepoFile('Dockerfile'));
const runtime = dockerfile.stages.at(-1)!;

/** The image's ENV, the runtime stage's user and its numeric uid. */
export const IMAGE = {
  env: Object.assign({}, ...instructionsOf(runtime, 'ENV').map(envAssignments)) as Record<string, string>,
  user: instructionsOf(runtime, 'USER').at(-1)?.text ?? 'root',
  uid: Number(/--uid (\d+)/.exec(instructionsOf(runtime, 'RUN').flatMap(runCommands).join(' '))?.[1]),
};

/** Minimal view of a Kubernetes object. */
export interface KubeObject {
  readonly kind: string;
  readonly metadata: { readonly name: string; readonly labels?: Record<string, string> };
  readonly [key: string]: unknown;
}

/** The systemd unit, parsed. */
export const UNIT = parseUnitFile(readRepoFile('deploy/systemd/statecast.service'));

/** The Mosquitto configuration's directives (first word → rest of each line). */
export function mosquittoDirectives(): [string, string][] {
  return readRepoFile('deploy/mosquitto/mosquitto.conf')
    .split('\n')
    .map((l) => l.trim())
    .filter((l) => l !== '' && !l.startsWith('#'))
    .map((l) => {
      const [word, ...rest] = l.split(/\s+/);
      return [word!, rest.join(' ')];
    });
}

/** Seconds of a duration like `20s`, `2m`, `1h30m` (Compose and Prometheus style). */
export function durationS(text: string): number {
  const units: Record<string, number> = { ms: 0.001, s: 1, m: 60, h: 3600, d: 86400, w: 604800, y: 31536000 };
  const parts = [...text.matchAll(/(\d+)(ms|s|m|h|d|w|y)/g)];
  if (parts.length === 0 || parts.map((p) => p[0]).join('') !== text) throw new Error(`not a duration: ${text}`);
  return parts.reduce((sum, p) => sum + Number(p[1]) * units[p[2]!]!, 0);
}
