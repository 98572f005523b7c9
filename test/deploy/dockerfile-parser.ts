/**
 * A small Dockerfile reader for the deployment tests: stages, and within each stage the
 * instructions with their flags and arguments (exec form decoded from JSON). It covers what our
 * own Dockerfile uses (line continuations, comments, global ARG defaults in FROM, ENV key=value
 * lists, exec and shell forms) and throws on anything it does not understand, so a construct the
 * tests cannot follow fails loudly instead of being skipped.
 */

/** One instruction, e.g. `RUN --mount=type=cache,target=/root/.npm npm ci`. */
export interface DockerInstruction {
  /** Upper-case keyword: RUN, COPY, ENV, ... */
  readonly keyword: string;
  /** Leading `--name=value` flags (`--from`, `--mount`, `--interval`, ...), by name. */
  readonly flags: Readonly<Record<string, string>>;
  /** The arguments after the flags, as written (continuations joined with a space). */
  readonly text: string;
  /** The exec form's argument list when the arguments are a JSON array, else null. */
  readonly exec: readonly string[] | null;
  /** 1-based line where the instruction starts. */
  readonly line: number;
}

/** A build stage: `FROM base AS name` and the instructions up to the next FROM. */
export interface DockerStage {
  readonly name: string;
  /** The base image with global ARG defaults substituted. */
  readonly base: string;
  readonly instructions: readonly DockerInstruction[];
}

/** A parsed Dockerfile. */
export interface Dockerfile {
  /** Global `ARG name=default` lines before the first FROM. */
  readonly args: Readonly<Record<string, string>>;
  readonly stages: readonly DockerStage[];
}

const KEYWORDS = new Set([
  'FROM', 'RUN', 'CMD', 'LABEL', 'EXPOSE', 'ENV', 'ADD', 'COPY', 'ENTRYPOINT', 'VOLUME', 'USER',
  'WORKDIR', 'ARG', 'ONBUILD', 'STOPSIGNAL', 'HEALTHCHECK', 'SHELL',
]);

/** Joins continuation lines and drops comments; returns [startLine, text] per logical line. */
function logicalLines(source: string): [number, string][] {
  const out: [number, string][] = [];
  let current: string | null = null;
  let start = 0;
  source.split(/\r?\n/).forEach((raw, i) => {
    const trimmed = raw.trim();
    if (trimmed.startsWith('#')) return; // comments (and parser directives) vanish, even mid-continuation
    if (current === null) {
      if (trimmed === '') return;
      current = '';
      start = i + 1;
    }
    const continued = /\\\s*$/.test(raw);
    current += (current === '' ? '' : ' ') + (continued ? raw.replace(/\\\s*$/, '') : raw).trim();
    if (!continued) {
      out.push([start, current]);
      current = null;
    }
  });
  if (current !== null) throw new Error(`line ${start}: the file ends inside a continuation`);
  return out;
}

/** Splits off leading `--name=value` flags. */
function splitFlags(text: string): { flags: Record<string, string>; rest: string } {
  const flags: Record<string, string> = {};
  let rest = text;
  for (;;) {
    const m = /^--([a-z-]+)=(\S+)\s*/.exec(rest);
    if (m === null) return { flags, rest };
    flags[m[1]!] = m[2]!;
    rest = rest.slice(m[0].length);
  }
}

function execForm(text: string, line: number): string[] | null {
  if (!text.startsWith('[')) return null;
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    throw new Error(`line ${line}: an argument list that starts with "[" is not valid JSON`);
  }
  if (!Array.isArray(parsed) || !parsed.every((a) => typeof a === 'string')) {
    throw new Error(`line ${line}: the exec form must be a JSON array of strings`);
  }
  return parsed as string[];
}

function substitute(text: string, args: Readonly<Record<string, string>>, line: number): string {
  return text.replace(/\$\{?([A-Za-z_][A-Za-z0-9_]*)\}?/g, (_, name: string) => {
    const value = args[name];
    if (value === undefined) throw new Error(`line ${line}: ARG ${name} has no default`);
    return value;
  });
}

/** Parses a Dockerfile's text; throws with the line number on what it does not support. */
export function parseDockerfile(source: string): Dockerfile {
  const args: Record<string, string> = {};
  const stages: { name: string; base: string; instructions: DockerInstruction[] }[] = [];
  for (const [line, text] of logicalLines(source)) {
    const m = /^([A-Za-z]+)\s*(.*)$/.exec(text);
    const keyword = m?.[1]?.toUpperCase();
    if (m === null || keyword === undefined || !KEYWORDS.has(keyword)) throw new Error(`line ${line}: not an instruction: ${text}`);
    const { flags, rest } = splitFlags(m[2]!);
    if (keyword === 'FROM') {
      const from = /^(\S+)(?:\s+AS\s+(\S+))?$/i.exec(rest);
      if (from === null) throw new Error(`line ${line}: expected FROM image [AS name]`);
      stages.push({ name: from[2] ?? String(stages.length), base: substitute(from[1]!, args, line), instructions: [] });
      continue;
    }
    const stage = stages.at(-1);
    if (stage === undefined) {
      if (keyword !== 'ARG') throw new Error(`line ${line}: only ARG may come before the first FROM`);
      const arg = /^([A-Za-z_][A-Za-z0-9_]*)(?:=(.*))?$/.exec(rest);
      if (arg === null) throw new Error(`line ${line}: expected ARG name[=default]`);
      args[arg[1]!] = arg[2] ?? '';
      continue;
    }
    stage.instructions.push({ keyword, flags, text: rest, exec: execForm(rest, line), line });
  }
  if (stages.length === 0) throw new Error('no FROM: not a Dockerfile');
  return { args, stages };
}

/** The `ENV` assignments of an instruction: `K=V K2="V 2"` (quotes removed). */
export function envAssignments(instruction: DockerInstruction): Record<string, string> {
  const out: Record<string, string> = {};
  const re = /([A-Za-z_][A-Za-z0-9_]*)=("(?:[^"\\]|\\.)*"|\S*)\s*/gy;
  let m: RegExpExecArray | null;
  let consumed = 0;
  while ((m = re.exec(instruction.text)) !== null && m[0] !== '') {
    const raw = m[2]!;
    out[m[1]!] = raw.startsWith('"') ? raw.slice(1, -1).replace(/\\(.)/g, '$1') : raw;
    consumed = re.lastIndex;
  }
  if (consumed !== instruction.text.length) {
    throw new Error(`line ${instruction.line}: expected ENV key=value pairs, got ${instruction.text}`);
  }
  return out;
}

/** The shell-form command lines of a RUN: its text split on `&&`. */
export function runCommands(instruction: DockerInstruction): string[] {
  if (instruction.exec !== null) return [instruction.exec.join(' ')];
  return instruction.text.split('&&').map((c) => c.trim().replace(/\s+/g, ' '));
}

/** The instructions of `stage` with `keyword`. */
export function instructionsOf(stage: DockerStage, keyword: string): DockerInstruction[] {
  return stage.instructions.filter((i) => i.keyword === keyword);
}

/** The stage named `name`; throws when absent. */
export function stageNamed(file: Dockerfile, name: string): DockerStage {
  const stage = file.stages.find((s) => s.name === name);
  if (stage === undefined) throw new Error(`no stage named ${name}`);
  return stage;
}

/** The command of a `HEALTHCHECK [flags] CMD ...` instruction as an argument list. */
export function healthcheckCommand(instruction: DockerInstruction): string[] {
  const m = /^CMD\s+(.*)$/.exec(instruction.text);
  if (m === null) throw new Error(`line ${instruction.line}: expected HEALTHCHECK [flags] CMD ...`);
  return execForm(m[1]!, instruction.line) ?? ['/bin/sh', '-c', m[1]!];
}
