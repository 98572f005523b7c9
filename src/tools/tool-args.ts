/**
 * A small hand-written flag parser for the offline commands: `--name value`, `--name=value`,
 * boolean switches and repeatable options, with errors that name the flag. No positional
 * arguments: every input is named, so a command line reads the same in any order.
 */

/** How one flag takes its value. */
export type FlagKind = 'string' | 'boolean' | 'repeat';

/** The flags a command accepts, by name without the leading dashes. */
export type FlagSpec = Readonly<Record<string, FlagKind>>;

/** Parsed flags: strings, booleans, or string lists for repeatable flags. */
export interface ParsedFlags {
  readonly strings: ReadonlyMap<string, string>;
  readonly switches: ReadonlySet<string>;
  readonly lists: ReadonlyMap<string, readonly string[]>;
  /** True when --help or -h was given (other flags are then not checked). */
  readonly help: boolean;
}

/** A usage mistake; the message is shown to the user as is. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Parses argv against spec; throws UsageError for an unknown flag, a missing value or a stray word. */
export function parseFlags(argv: readonly string[], spec: FlagSpec): ParsedFlags {
  const strings = new Map<string, string>();
  const switches = new Set<string>();
  const lists = new Map<string, string[]>();
  if (argv.includes('--help') || argv.includes('-h')) return { strings, switches, lists, help: true };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    if (!arg.startsWith('--') || arg.length === 2) {
      throw new UsageError(`unexpected argument "${arg}"; every input is given by a flag such as --in FILE`);
    }
    const eq = arg.indexOf('=');
    const name = arg.slice(2, eq < 0 ? undefined : eq);
    const kind = spec[name];
    if (kind === undefined) throw new UsageError(`unknown option --${name}`);
    if (kind === 'boolean') {
      if (eq >= 0) throw new UsageError(`--${name} is a switch and takes no value`);
      switches.add(name);
      continue;
    }
    let value: string | undefined;
    if (eq >= 0) value = arg.slice(eq + 1);
    else {
      value = argv[i + 1];
      if (value === undefined || (value.startsWith('--') && value.length > 2)) throw new UsageError(`--${name} needs a value`);
      i += 1;
    }
    if (kind === 'repeat') {
      const list = lists.get(name) ?? [];
      list.push(value);
      lists.set(name, list);
    } else {
      if (strings.has(name)) throw new UsageError(`--${name} is given twice`);
      strings.set(name, value);
    }
  }
  return { strings, switches, lists, help: false };
}

/** The value of a required string flag. */
export function requiredFlag(flags: ParsedFlags, name: string): string {
  const value = flags.strings.get(name);
  if (value === undefined || value === '') throw new UsageError(`--${name} is required`);
  return value;
}

/** A flag holding a positive number (fallback when absent). */
export function positiveNumberFlag(flags: ParsedFlags, name: string, fallback: number): number {
  const text = flags.strings.get(name);
  if (text === undefined) return fallback;
  const value = Number(text);
  if (text.trim() === '' || !Number.isFinite(value) || value <= 0) {
    throw new UsageError(`--${name} must be a positive number, got "${text}"`);
  }
  return value;
}

/** A flag holding a positive integer (fallback when absent). */
export function positiveIntegerFlag(flags: ParsedFlags, name: string, fallback: number): number {
  const value = positiveNumberFlag(flags, name, fallback);
  if (!Number.isSafeInteger(value)) throw new UsageError(`--${name} must be a whole number, got "${flags.strings.get(name) ?? ''}"`);
  return value;
}
