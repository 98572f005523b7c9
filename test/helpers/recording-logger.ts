import { EventEmitter } from 'node:events';

/** One recorded log call. */
export interface LogEntry {
  readonly level: 'info' | 'warn' | 'error' | 'debug';
  readonly fields: Record<string, unknown>;
  readonly message: string;
}

/** A pino-like logger that keeps every call, so tests can read and await log lines. */
export interface RecordingLogger {
  info(fields: object, message: string): void;
  warn(fields: object, message: string): void;
  error(fields: object, message: string): void;
  debug(fields: object, message: string): void;
  readonly entries: readonly LogEntry[];
  /** Entries whose message contains `text`. */
  find(text: string): LogEntry[];
  /** Resolves once `count` entries whose message contains `text` have been logged. */
  waitFor(text: string, count?: number): Promise<LogEntry[]>;
}

/** Creates a {@link RecordingLogger}. */
export function createRecordingLogger(): RecordingLogger {
  const entries: LogEntry[] = [];
  const logged = new EventEmitter();
  const record = (level: LogEntry['level']) => (fields: object, message: string) => {
    entries.push({ level, fields: { ...fields } as Record<string, unknown>, message });
    logged.emit('entry');
  };
  const find = (text: string): LogEntry[] => entries.filter((e) => e.message.includes(text));
  return {
    info: record('info'),
    warn: record('warn'),
    error: record('error'),
    debug: record('debug'),
    entries,
    find,
    waitFor(text, count = 1) {
      return new Promise((resolve) => {
        const check = (): void => {
          const found = find(text);
          if (found.length < count) return;
          logged.off('entry', check);
          resolve(found);
        };
        logged.on('entry', check);
        check();
      });
    },
  };
}
