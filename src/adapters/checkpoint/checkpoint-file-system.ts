/**
 * The few file operations the checkpoint store needs, as a port: the store is written against
 * this interface and gets Node's file system by default, so a test can make one step fail with
 * ENOSPC or EROFS (which cannot be provoked on a real disk without privileges) and check that
 * the previous checkpoint survives.
 */
import { mkdir, open, readFile, rename, stat, unlink } from 'node:fs/promises';
import { errnoCode } from './checkpoint-write-error.js';

/** An open file being written. */
export interface CheckpointFileHandle {
  writeFile(data: Uint8Array): Promise<void>;
  /** fsync: returns once the data is on stable storage. */
  sync(): Promise<void>;
  close(): Promise<void>;
}

/** The file operations of the checkpoint store; each rejects with a Node system error (with `code`). */
export interface CheckpointFileSystem {
  /** Creates the directory and its parents; succeeds when it exists already. */
  makeDirectory(path: string): Promise<void>;
  /** Creates a new file for writing (mode 0o644); fails with EEXIST when the path exists. */
  createExclusive(path: string): Promise<CheckpointFileHandle>;
  rename(from: string, to: string): Promise<void>;
  remove(path: string): Promise<void>;
  readFile(path: string): Promise<Uint8Array>;
  /** True when something exists at the path. */
  exists(path: string): Promise<boolean>;
  /** fsync of a directory, so a rename in it is on stable storage. */
  syncDirectory(path: string): Promise<void>;
}

// Platforms and file systems that cannot fsync a directory say so with one of these; the
// rename is then as durable as that platform allows, which is no reason to fail the save.
const DIRECTORY_SYNC_UNSUPPORTED = new Set(['EINVAL', 'ENOTSUP', 'EISDIR', 'EPERM', 'EBADF']);

/** Node's file system. */
export const nodeCheckpointFileSystem: CheckpointFileSystem = {
  async makeDirectory(path) {
    await mkdir(path, { recursive: true });
  },
  createExclusive: (path) => open(path, 'wx', 0o644),
  rename,
  remove: unlink,
  readFile,
  async exists(path) {
    try {
      await stat(path);
      return true;
    } catch (e) {
      if (errnoCode(e) === 'ENOENT') return false;
      throw e;
    }
  },
  async syncDirectory(path) {
    let handle;
    try {
      handle = await open(path, 'r');
      await handle.sync();
    } catch (e) {
      if (!DIRECTORY_SYNC_UNSUPPORTED.has(errnoCode(e) ?? '')) throw e;
    } finally {
      await handle?.close();
    }
  },
};
