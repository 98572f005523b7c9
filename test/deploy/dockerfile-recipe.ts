/**
 * Performs a Dockerfile's stages without Docker, for the recipe test: each stage gets a folder
 * standing for its root file system, WORKDIR and COPY map container paths into it (from the
 * build context or, with `--from`, from an earlier stage's folder), ENV accumulates, and the
 * `npm` commands of each RUN are executed in the working directory with that environment.
 * Other RUN commands (creating the user, a folder, chown) need root and are recorded, not run.
 * Anything else the image would do at build time is refused, so the test cannot silently skip
 * a step that matters.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, statSync } from 'node:fs';
import { dirname, join, posix } from 'node:path';
import { envAssignments, runCommands, type Dockerfile, type DockerInstruction } from './dockerfile-parser.js';

/** What performing one stage did. */
export interface PerformedStage {
  readonly name: string;
  /** The folder standing for the stage's `/`. */
  readonly rootfs: string;
  /** The container working directory (WORKDIR), e.g. `/app`. */
  readonly workdir: string;
  /** ENV at the end of the stage. */
  readonly env: Readonly<Record<string, string>>;
  /** The npm command lines executed, in order (`npm ci`, `npm run build`, ...). */
  readonly executed: readonly string[];
  /** The other RUN command lines, recorded but not executed. */
  readonly recorded: readonly string[];
}

/** Options of performStages. */
export interface PerformOptions {
  /** The build context folder (what `docker build` would send). */
  readonly context: string;
  /** An empty folder to hold one sub-folder per stage. */
  readonly workRoot: string;
  /** Extra environment for the npm commands only (cache, audit switches); never for the image. */
  readonly npmEnv: Readonly<Record<string, string>>;
}

const IGNORED_AT_BUILD = new Set(['EXPOSE', 'VOLUME', 'HEALTHCHECK', 'STOPSIGNAL', 'ENTRYPOINT', 'CMD', 'USER', 'LABEL']);

/** Maps a container path (absolute, or relative to `workdir`) into `rootfs`. */
export function hostPath(rootfs: string, workdir: string, containerPath: string): string {
  return join(rootfs, posix.resolve(workdir, containerPath));
}

/** Performs every stage of `file` in order; throws on a failed npm command or an unsupported step. */
export function performStages(file: Dockerfile, options: PerformOptions): PerformedStage[] {
  const done: PerformedStage[] = [];
  for (const stage of file.stages) {
    const rootfs = join(options.workRoot, stage.name);
    mkdirSync(rootfs, { recursive: true });
    const state = { workdir: '/', env: {} as Record<string, string>, executed: [] as string[], recorded: [] as string[] };
    for (const instruction of stage.instructions) {
      switch (instruction.keyword) {
        case 'WORKDIR':
          state.workdir = posix.resolve(state.workdir, instruction.text);
          mkdirSync(hostPath(rootfs, state.workdir, '.'), { recursive: true });
          break;
        case 'ENV':
          Object.assign(state.env, envAssignments(instruction));
          break;
        case 'COPY':
          copyStep(instruction, rootfs, state.workdir, options.context, done);
          break;
        case 'RUN':
          for (const command of runCommands(instruction)) {
            if (!command.startsWith('npm ')) {
              state.recorded.push(command);
              continue;
            }
            runNpm(command, hostPath(rootfs, state.workdir, '.'), { ...state.env, ...options.npmEnv }, instruction.line);
            state.executed.push(command);
          }
          break;
        default:
          if (!IGNORED_AT_BUILD.has(instruction.keyword)) {
            throw new Error(`line ${instruction.line}: the recipe does not perform ${instruction.keyword}`);
          }
      }
    }
    done.push({ name: stage.name, rootfs, ...state });
  }
  return done;
}

function copyStep(
  instruction: DockerInstruction, rootfs: string, workdir: string, context: string, done: readonly PerformedStage[],
): void {
  const { from, ...rest } = instruction.flags;
  if (Object.keys(rest).length > 0) throw new Error(`line ${instruction.line}: unsupported COPY flags ${Object.keys(rest).join(', ')}`);
  const words = instruction.exec ?? instruction.text.split(/\s+/);
  const dest = words.at(-1)!;
  const sources = words.slice(0, -1);
  const source = (path: string): string => {
    if (from === undefined) return join(context, posix.normalize(path));
    const stage = done.find((s) => s.name === from);
    if (stage === undefined) throw new Error(`line ${instruction.line}: no earlier stage ${from}`);
    return hostPath(stage.rootfs, stage.workdir, path);
  };
  const target = hostPath(rootfs, workdir, dest);
  const intoFolder = dest.endsWith('/') || sources.length > 1;
  for (const path of sources) {
    const origin = source(path);
    if (!existsSync(origin)) throw new Error(`line ${instruction.line}: COPY source ${path} does not exist`);
    if (statSync(origin).isDirectory()) {
      cpSync(origin, target, { recursive: true }); // a folder's contents, as Docker copies them
    } else {
      const file = intoFolder ? join(target, posix.basename(path)) : target;
      mkdirSync(dirname(file), { recursive: true });
      cpSync(origin, file);
    }
  }
}

function runNpm(command: string, cwd: string, env: Readonly<Record<string, string>>, line: number): void {
  const args = command.split(' ').slice(1);
  const result = spawnSync('npm', args, {
    cwd,
    env: { PATH: process.env.PATH ?? '/usr/bin:/bin', HOME: process.env.HOME ?? cwd, ...env },
    encoding: 'utf8',
    maxBuffer: 64 * 1024 * 1024,
  });
  if (result.status !== 0) {
    const output = `${result.stdout ?? ''}\n${result.stderr ?? ''}`.trim().split('\n').slice(-30).join('\n');
    throw new Error(`line ${line}: "${command}" exited with ${result.status ?? result.signal}:\n${output}`);
  }
}
