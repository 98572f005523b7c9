/** A checkpoint that could not be written, with the errno code and the path it concerned. */
export class CheckpointWriteError extends Error {
  /** The errno code from the file system, e.g. `ENOSPC`, `EACCES`, `EROFS`, `ENOTDIR` (`EUNKNOWN` when none was given). */
  readonly code: string;
  /** The file or directory the failed operation was on (the temporary file, the target or the directory). */
  readonly path: string;
  /** The step that failed: `mkdir`, `open`, `write`, `fsync`, `close`, `rename` or `fsync-directory`. */
  readonly operation: string;

  /** Wraps a file-system error; the previous checkpoint, if any, is still in place when this is thrown. */
  constructor(operation: string, path: string, cause: unknown) {
    const code = errnoCode(cause) ?? 'EUNKNOWN';
    super(`checkpoint not written: ${operation} ${path} failed with ${code}`, { cause });
    this.name = 'CheckpointWriteError';
    this.code = code;
    this.path = path;
    this.operation = operation;
  }
}

/** The `code` of a Node system error, when it has one. */
export function errnoCode(e: unknown): string | undefined {
  if (typeof e !== 'object' || e === null) return undefined;
  const code = (e as { code?: unknown }).code;
  return typeof code === 'string' ? code : undefined;
}
