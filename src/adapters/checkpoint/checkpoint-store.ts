/**
 * The checkpoint file on disk: atomic saves and a load that never trusts a damaged file.
 *
 * A save writes `<file>.tmp-<pid>-<n>`, fsyncs it, renames it over the target and fsyncs the
 * directory, so a crash at any moment leaves either the old checkpoint or the new one, never a
 * mix; saves run one after another in call order, so an older document never lands last. A
 * load that finds a file it cannot use (cut short, corrupt, another format or version, another
 * configuration) moves it aside to `<file>.rejected-<time>` for an operator to inspect, reports
 * why, and lets the daemon start fresh: it neither deletes the file nor throws.
 */
import { join } from 'node:path';
import { pid as ownPid } from 'node:process';
import { checkDocument, isDocumentIssue, type CheckpointDocument, type CheckpointProblem } from './checkpoint-document.js';
import { decodeCheckpointFile, encodeCheckpointFile } from './checkpoint-file.js';
import { nodeCheckpointFileSystem, type CheckpointFileHandle, type CheckpointFileSystem } from './checkpoint-file-system.js';
import { CheckpointWriteError, errnoCode } from './checkpoint-write-error.js';

export * from './checkpoint-document.js';
export { configFingerprint } from './config-fingerprint.js';
export { CheckpointWriteError } from './checkpoint-write-error.js';
export type { CheckpointFileHandle, CheckpointFileSystem } from './checkpoint-file-system.js';

/** A pino-compatible logger; the store warns when it sets a file aside. */
export interface CheckpointLogger {
  warn(fields: object, message: string): void;
}

/** Where and how the store keeps its file. */
export interface CheckpointStoreOptions {
  /** Directory of the checkpoint file; created (with parents) on the first save. */
  readonly directory: string;
  /** File name inside the directory; default `tracks.checkpoint.json`. */
  readonly fileName?: string;
  /** configFingerprint() of the running configuration; a file with another one is rejected. */
  readonly configFingerprint: string;
  readonly logger?: CheckpointLogger;
  /** Clock for the name of a rejected file; default `() => new Date()`. */
  readonly now?: () => Date;
  /** File operations; default Node's (tests inject failures here). */
  readonly fileSystem?: CheckpointFileSystem;
  /** Process id in temporary file names; default this process's. */
  readonly pid?: number;
}

/** What load found. */
export type LoadResult =
  | { readonly kind: 'none' }
  | { readonly kind: 'ok'; readonly doc: CheckpointDocument }
  | {
      readonly kind: 'rejected';
      readonly problem: CheckpointProblem;
      readonly reason: string;
      /** Where the file now is, or null when it could not be moved (it is then still at its path). */
      readonly movedTo: string | null;
    };

/** The checkpoint file of one daemon. */
export interface CheckpointStore {
  /** Absolute or relative path of the checkpoint file. */
  readonly path: string;
  /**
   * Writes the document atomically (after any save still in progress). Rejects with
   * CheckpointWriteError (code, path) when the file system refuses; the previous checkpoint is
   * then untouched and no temporary file is left (except after operation `fsync-directory`:
   * the new file is then in place but may not survive a power cut). The caller logs it and
   * carries on estimating.
   */
  save(doc: CheckpointDocument): Promise<void>;
  /** Like save, for file bytes already encoded (by encodeCheckpointInSlices, say). */
  saveEncoded(bytes: Uint8Array): Promise<void>;
  /** Reads the checkpoint; never rejects (see LoadResult and the file comment). */
  load(): Promise<LoadResult>;
  /** Resolves once every save requested so far has finished (succeeded or failed). */
  idle(): Promise<void>;
}

/** Creates the store; touches nothing on disk until the first save or load. */
export function createCheckpointStore(options: CheckpointStoreOptions): CheckpointStore {
  const fileName = options.fileName ?? 'tracks.checkpoint.json';
  if (fileName === '' || /[/\\]/.test(fileName)) throw new TypeError(`checkpoint fileName must be a bare file name, got ${JSON.stringify(fileName)}`);
  const fs = options.fileSystem ?? nodeCheckpointFileSystem;
  const now = options.now ?? (() => new Date());
  const pid = options.pid ?? ownPid;
  const directory = options.directory;
  const path = join(directory, fileName);
  let tempCounter = 0;
  let queue: Promise<void> = Promise.resolve();

  async function writeAtomically(bytes: Uint8Array): Promise<void> {
    const temp = `${path}.tmp-${pid}-${tempCounter++}`;
    let step = 'mkdir';
    let stepPath = directory;
    let handle: CheckpointFileHandle | undefined;
    let created = false;
    try {
      await fs.makeDirectory(directory);
      [step, stepPath] = ['open', temp];
      handle = await fs.createExclusive(temp);
      created = true;
      step = 'write';
      await handle.writeFile(bytes);
      step = 'fsync';
      await handle.sync();
      step = 'close';
      const closing = handle;
      handle = undefined;
      await closing.close();
      [step, stepPath] = ['rename', path];
      await fs.rename(temp, path);
      created = false;
      [step, stepPath] = ['fsync-directory', directory];
      await fs.syncDirectory(directory);
    } catch (e) {
      await handle?.close().catch(() => undefined);
      // Only a temp file this save created is removed: an EEXIST one belongs to someone else.
      if (created) await fs.remove(temp).catch(() => undefined);
      throw new CheckpointWriteError(step, stepPath, e);
    }
  }

  /** `<file>.rejected-<time>`, with a counter when two rejections share a millisecond. */
  async function moveAside(): Promise<string | null> {
    const stamp = now().toISOString().replace(/:/g, '-');
    try {
      for (let k = 0; ; k++) {
        const candidate = `${path}.rejected-${stamp}${k === 0 ? '' : `-${k}`}`;
        if (await fs.exists(candidate)) continue;
        await fs.rename(path, candidate);
        return candidate;
      }
    } catch (e) {
      options.logger?.warn({ path, code: errnoCode(e) ?? 'EUNKNOWN' }, 'could not move the rejected checkpoint aside; it stays in place');
      return null;
    }
  }

  async function reject(problem: CheckpointProblem, reason: string): Promise<LoadResult> {
    const movedTo = await moveAside();
    options.logger?.warn({ path, problem, reason, movedTo }, 'checkpoint rejected; starting without restored tracks');
    return { kind: 'rejected', problem, reason, movedTo };
  }

  async function load(): Promise<LoadResult> {
    let bytes: Uint8Array;
    try {
      bytes = await fs.readFile(path);
    } catch (e) {
      const code = errnoCode(e) ?? 'EUNKNOWN';
      if (code === 'ENOENT') return { kind: 'none' };
      return reject('unreadable', `the file cannot be read (${code})`);
    }
    const file = decodeCheckpointFile(bytes);
    if (isDocumentIssue(file)) return reject(file.problem, file.reason);
    let parsed: unknown;
    try {
      parsed = JSON.parse(file.body);
    } catch (e) {
      return reject('not-json', `the body is not JSON: ${e instanceof Error ? e.message : String(e)}`);
    }
    const doc = checkDocument(parsed, options.configFingerprint);
    if (isDocumentIssue(doc)) return reject(doc.problem, doc.reason);
    return { kind: 'ok', doc };
  }

  const saveEncoded = (bytes: Uint8Array): Promise<void> => {
    const run = queue.then(() => writeAtomically(bytes));
    queue = run.catch(() => undefined);
    return run;
  };

  return {
    path,
    save(doc) {
      let bytes: Uint8Array;
      try {
        // Encoding happens now, so the document is captured as it is at the call.
        bytes = encodeCheckpointFile(doc);
      } catch (e) {
        return Promise.reject(e);
      }
      return saveEncoded(bytes);
    },
    saveEncoded,
    load,
    idle: () => queue,
  };
}
