/**
 * Keeps the Dockerfile honest without a Docker engine (none runs on these machines): the file is
 * parsed and checked against the daemon's defaults, then its stages are performed outside Docker
 * (the build context filtered by .dockerignore, COPY into per-stage folders, the npm RUN steps
 * executed as written) and the runtime stage's daemon is booted the way the image's ENTRYPOINT
 * and CMD would boot it, with ports moved to free ones on 127.0.0.1.
 *
 * Slow (two `npm ci` runs, from the local npm cache when it has the packages).
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse as parseYaml, stringify as stringifyYaml } from 'yaml';
import { ENV_OVERRIDES } from '../../src/config/env-overrides.js';
import { parseConfig } from '../../src/config/load-config.js';
import { freePort } from '../helpers/free-port.js';
import { copyBuildContext, dockerignoreMatcher } from './docker-context.js';
import {
  envAssignments, healthcheckCommand, instructionsOf, parseDockerfile, runCommands, stageNamed,
} from './dockerfile-parser.js';
import { hostPath, performStages, type PerformedStage } from './dockerfile-recipe.js';

const ROOT = fileURLToPath(new URL('../../', import.meta.url));
const dockerfile = parseDockerfile(readFileSync(join(ROOT, 'Dockerfile'), 'utf8'));
const runtime = dockerfile.stages.at(-1)!; // the last stage is the image
const build = stageNamed(dockerfile, 'build');

const defaultsResult = parseConfig(parseYaml(readFileSync(join(ROOT, 'config/minimal.yaml'), 'utf8')), {});
if (!defaultsResult.ok) throw new Error('config/minimal.yaml does not parse');
/** The daemon's defaults, as the schema fills them in. */
const defaults = defaultsResult.config;

const imageEnv: Record<string, string> = Object.assign({}, ...instructionsOf(runtime, 'ENV').map(envAssignments));
const user = instructionsOf(runtime, 'USER').at(-1)?.text ?? 'root';
const volumes: string[] = instructionsOf(runtime, 'VOLUME').flatMap((v) => [...(v.exec ?? v.text.split(/\s+/))]);
const systemCommands = instructionsOf(runtime, 'RUN').flatMap(runCommands).filter((c) => !c.startsWith('npm '));
const npmCommands = (stage: typeof runtime): string[] =>
  instructionsOf(stage, 'RUN').flatMap(runCommands).filter((c) => c.startsWith('npm '));
const single = (keyword: string): readonly string[] => {
  const found = instructionsOf(runtime, keyword);
  expect(found, `${keyword} instructions`).toHaveLength(1);
  return found[0]!.exec ?? [found[0]!.text];
};
const configPathInImage = (): string => {
  const cmd = single('CMD');
  const at = cmd.indexOf('--config');
  expect(at, 'CMD passes --config').toBeGreaterThanOrEqual(0);
  return cmd[at + 1]!;
};
/** The image's default configuration file, read from the build context path COPY takes it from. */
const imageConfigSource = (): string => {
  const target = configPathInImage();
  const copy = instructionsOf(runtime, 'COPY').find((c) => c.text.split(/\s+/).at(-1) === target);
  expect(copy, `a COPY writes ${target}`).toBeDefined();
  return readFileSync(join(ROOT, copy!.text.split(/\s+/)[0]!), 'utf8');
};

describe('Dockerfile', () => {
  it('builds both stages from a Node 20 slim image', () => {
    for (const stage of dockerfile.stages) expect(stage.base).toMatch(/^node:20(\.\d+)*(-[a-z]+)?-slim$/);
  });

  it('runs the image as a user that is not root', () => {
    expect(user).not.toMatch(/^(root|0)(:|$)/);
  });

  it('creates that user in the runtime stage', () => {
    expect(systemCommands.some((c) => c.startsWith('useradd ') && c.split(' ').at(-1) === user)).toBe(true);
  });

  it('installs all dependencies and builds in the build stage', () => {
    expect(npmCommands(build)).toEqual(['npm ci', 'npm run build']);
  });

  it('installs production dependencies only in the runtime stage', () => {
    expect(npmCommands(runtime)).toEqual(['npm ci --omit=dev']);
  });

  it('takes the compiled daemon into the runtime stage from the build stage', () => {
    const fromBuild = instructionsOf(runtime, 'COPY').filter((c) => c.flags.from === 'build');
    expect(fromBuild.map((c) => c.text)).toEqual(['/app/dist ./dist']);
  });

  it('declares volumes for the configuration and the state directory', () => {
    expect(volumes).toEqual(['/etc/statecast', '/var/lib/statecast']);
  });

  it('keeps checkpoints on the state volume, owned by the image user', () => {
    const stateDir = imageEnv.STATECAST_STATE_DIR;
    expect(volumes).toContain(stateDir);
    expect(systemCommands).toContain(`chown ${user}:${user} ${stateDir}`);
  });

  it('reads its configuration from the configuration volume', () => {
    expect(configPathInImage().startsWith(`${volumes[0]}/`)).toBe(true);
  });

  it('sets only environment overrides that the daemon reads', () => {
    const known = new Set(ENV_OVERRIDES.map((o) => o.name));
    const ours = Object.keys(imageEnv).filter((name) => name.startsWith('STATECAST_'));
    expect(ours.length).toBeGreaterThan(0);
    expect(ours.filter((name) => !known.has(name))).toEqual([]);
  });

  it('exposes the daemon\'s default HTTP port and pins it with STATECAST_HTTP_PORT', () => {
    expect(single('EXPOSE')).toEqual([String(defaults.http.port)]);
    expect(imageEnv.STATECAST_HTTP_PORT).toBe(String(defaults.http.port));
  });

  it('checks health with a GET of /healthz on the pinned port, falling back to the default', () => {
    const [check] = instructionsOf(runtime, 'HEALTHCHECK');
    const script = healthcheckCommand(check!).join(' ');
    expect(script).toContain('process.env.STATECAST_HTTP_PORT');
    expect(script).toContain(`'${defaults.http.port}'`);
    expect(script).toContain("+ '/healthz'");
  });

  it('stops with SIGTERM, which the daemon handles itself', () => {
    expect(single('STOPSIGNAL')).toEqual(['SIGTERM']);
  });

  it('refuses the image\'s network-wide bind when no token is given', () => {
    const result = parseConfig(parseYaml(imageConfigSource()), imageEnv);
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues.map((i) => i.path)).toContain('http.host');
  });

  it('accepts the image\'s environment once STATECAST_API_TOKEN is given', () => {
    const result = parseConfig(parseYaml(imageConfigSource()), { ...imageEnv, STATECAST_API_TOKEN: 'tank-farm-token-0123456789' });
    expect(result.ok).toBe(true);
  });
});

const TOKEN = 'vehicle-yard-test-token-0123';

interface Daemon {
  readonly child: ChildProcess;
  readonly env: Record<string, string>;
  readonly baseUrl: string;
  readonly stateDir: string;
  output: string;
  readonly exit: Promise<number | null>;
}

/** Waits until `predicate` holds, polling every 100 ms, or fails after `timeoutMs`. */
async function eventually(what: string, timeoutMs: number, predicate: () => Promise<boolean>): Promise<void> {
  const until = Date.now() + timeoutMs;
  while (!(await predicate().catch(() => false))) {
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

function runHealthcheck(env: Record<string, string>): number | null {
  const [command, ...args] = healthcheckCommand(instructionsOf(runtime, 'HEALTHCHECK')[0]!);
  expect(command).toBe('node');
  return spawnSync(process.execPath, args, { env, timeout: 10_000 }).status;
}

describe('the Dockerfile recipe, performed outside Docker', () => {
  let work = '';
  let image: PerformedStage;
  let daemon: Daemon;

  beforeAll(async () => {
    work = mkdtempSync(join(tmpdir(), 'statecast-image-'));
    const context = join(work, 'context');
    copyBuildContext(ROOT, context, dockerignoreMatcher(readFileSync(join(ROOT, '.dockerignore'), 'utf8')));
    const stages = performStages(dockerfile, {
      context,
      workRoot: join(work, 'stages'),
      npmEnv: { npm_config_prefer_offline: 'true', npm_config_audit: 'false', npm_config_fund: 'false', npm_config_update_notifier: 'false' },
    });
    image = stages.at(-1)!;

    // The image's default configuration with the embedded broker moved to a free port.
    const config = parseYaml(readFileSync(hostPath(image.rootfs, image.workdir, configPathInImage()), 'utf8')) as Record<string, unknown>;
    config.embeddedBroker = { host: '127.0.0.1', port: await freePort() };
    const configFile = join(work, 'statecast.yaml');
    writeFileSync(configFile, stringifyYaml(config));

    const port = await freePort();
    const stateDir = hostPath(image.rootfs, image.workdir, image.env.STATECAST_STATE_DIR!);
    const env: Record<string, string> = {
      PATH: process.env.PATH ?? '/usr/bin:/bin',
      HOME: work,
      ...image.env,
      STATECAST_STATE_DIR: stateDir,
      STATECAST_HTTP_PORT: String(port),
      STATECAST_HTTP_HOST: '127.0.0.1', // tests listen on loopback only; the 0.0.0.0 refusal is checked above
      STATECAST_API_TOKEN: TOKEN,
    };
    const [node, script] = single('ENTRYPOINT');
    expect(node).toBe('node');
    const cmd = single('CMD').map((arg) => (arg === configPathInImage() ? configFile : arg));
    const child = spawn(process.execPath, [hostPath(image.rootfs, image.workdir, script!), ...cmd], {
      cwd: hostPath(image.rootfs, image.workdir, '.'),
      env,
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    const exit = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
    daemon = { child, env, baseUrl: `http://127.0.0.1:${port}`, stateDir, output: '', exit };
    child.stdout!.on('data', (d: Buffer) => (daemon.output += d.toString()));
    child.stderr!.on('data', (d: Buffer) => (daemon.output += d.toString()));
    const started = new Promise<void>((resolve, reject) => {
      child.stdout!.on('data', () => daemon.output.includes('statecast is running.') && resolve());
      void exit.then((code) => reject(new Error(`the daemon exited with ${code} before starting:\n${daemon.output}`)));
    });
    await started;
  }, 300_000);

  afterAll(async () => {
    if (daemon !== undefined && daemon.child.exitCode === null && daemon.child.signalCode === null) {
      daemon.child.kill('SIGKILL');
      await daemon.exit;
    }
    if (work !== '') rmSync(work, { recursive: true, force: true });
  });

  it('installs none of the packages the lockfile marks development-only', () => {
    // package-lock v3 flags a package `dev: true` when only devDependencies need it; type
    // packages that production dependencies pull in (@types/node via mqtt) are not flagged.
    const lock = JSON.parse(readFileSync(join(ROOT, 'package-lock.json'), 'utf8')) as { packages: Record<string, { dev?: boolean }> };
    const devOnly = Object.entries(lock.packages).filter(([path, p]) => path !== '' && p.dev === true).map(([path]) => path);
    expect(devOnly).toContain('node_modules/typescript');
    const installed = devOnly.filter((path) => existsSync(join(hostPath(image.rootfs, image.workdir, path), 'package.json')));
    expect(installed).toEqual([]);
  });

  it('answers /healthz with 200', async () => {
    expect((await fetch(`${daemon.baseUrl}/healthz`)).status).toBe(200);
  });

  it('answers /readyz with 200 once connected to its embedded broker', async () => {
    await eventually('/readyz to answer 200', 20_000, async () => (await fetch(`${daemon.baseUrl}/readyz`)).status === 200);
  });

  it('serves the dashboard\'s index.html at /', async () => {
    const response = await fetch(`${daemon.baseUrl}/`);
    expect(response.status).toBe(200);
    expect(await response.text()).toBe(readFileSync(join(ROOT, 'src/dashboard/index.html'), 'utf8'));
  });

  it('serves every file the dashboard loads: the index\'s links and the modules they import', async () => {
    const index = await (await fetch(`${daemon.baseUrl}/`)).text();
    const queue = [...index.matchAll(/\b(?:src|href)="([^"]+)"/g)].map((m) => new URL(m[1]!, `${daemon.baseUrl}/`).href);
    const seen = new Map<string, number>();
    while (queue.length > 0) {
      const url = queue.shift()!;
      if (seen.has(url) || !url.startsWith(daemon.baseUrl)) continue;
      const response = await fetch(url);
      seen.set(url, response.status);
      if (response.status !== 200 || !url.endsWith('.js')) continue;
      const code = await response.text();
      for (const m of code.matchAll(/\b(?:from|import)\s*\(?\s*['"](\.{1,2}\/[^'"]+)['"]/g)) queue.push(new URL(m[1]!, url).href);
    }
    expect(seen.size).toBeGreaterThan(2);
    expect([...seen].filter(([, status]) => status !== 200)).toEqual([]);
  });

  it('passes its own HEALTHCHECK command while running', () => {
    expect(runHealthcheck(daemon.env)).toBe(0);
  });

  it('exits with code 0 on SIGTERM', async () => {
    daemon.child.kill('SIGTERM');
    expect(await daemon.exit).toBe(0);
  }, 20_000);

  it('has written a checkpoint into the state volume when it stopped', () => {
    expect(readdirSync(daemon.stateDir).filter((f) => f.endsWith('.json'))).not.toEqual([]);
  });

  it('fails its HEALTHCHECK command once stopped', () => {
    expect(runHealthcheck(daemon.env)).toBe(1);
  });
});
