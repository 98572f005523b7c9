import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { chmod, mkdir, mkdtemp, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
  checkpointDocument,
  CheckpointWriteError,
  configFingerprint,
  createCheckpointStore,
  type CheckpointDocument,
  type CheckpointStoreOptions,
} from '../../../src/adapters/checkpoint/checkpoint-store.js';
import { encodeCheckpointFile } from '../../../src/adapters/checkpoint/checkpoint-file.js';
import type { CheckpointFileSystem } from '../../../src/adapters/checkpoint/checkpoint-file-system.js';
import { nodeCheckpointFileSystem } from '../../../src/adapters/checkpoint/checkpoint-file-system.js';
import { estimatorsByName, faultyFileSystem, someTracks, warningsLogger } from './checkpoint-fixtures.js';

const FILE = 'tracks.checkpoint.json';
const fingerprint = configFingerprint({ yard: { model: 'constant-velocity', q: 0.5 }, tanks: { model: 'constant-velocity', q: 1e-6 } });
const otherFingerprint = configFingerprint({ yard: { model: 'constant-velocity', q: 0.7 } });

function documentFor(seed: number): CheckpointDocument {
  return checkpointDocument(someTracks(estimatorsByName(), seed), fingerprint, new Date('2031-05-04T03:02:01.000Z'));
}

let dir: string;

beforeEach(async () => {
  dir = await mkdtemp(join(tmpdir(), 'statecast-checkpoint-'));
});

afterEach(async () => {
  await chmod(dir, 0o755);
  await rm(dir, { recursive: true, force: true });
});

function store(options: Partial<CheckpointStoreOptions> = {}) {
  return createCheckpointStore({ directory: dir, configFingerprint: fingerprint, now: () => new Date('2031-05-04T04:00:00.000Z'), ...options });
}

/** Root ignores the mode bits, so a chmod-ed directory only refuses writes for other users. */
async function modeStopsWrites(directory: string): Promise<boolean> {
  const probe = join(directory, 'probe');
  try {
    await writeFile(probe, '');
  } catch {
    return true;
  }
  await rm(probe);
  return false;
}

describe('checkpoint store', () => {
  it('finds nothing when there is no file', async () => {
    expect(await store().load()).toEqual({ kind: 'none' });
  });

  it('loads the document it saved', async () => {
    const doc = documentFor(0);
    const s = store();
    await s.save(doc);
    expect(await s.load()).toEqual({ kind: 'ok', doc });
  });

  it('writes the document as one JSON line followed by the SHA-256 of those bytes', async () => {
    await store().save(documentFor(0));
    const text = await readFile(join(dir, FILE), 'utf8');
    const match = /^(\{[^\n]*\})\n#sha256:([0-9a-f]{64})\n$/.exec(text);
    expect(match).not.toBeNull();
    expect(createHash('sha256').update(match![1]!).digest('hex')).toBe(match![2]);
    expect(JSON.parse(match![1]!)).toMatchObject({ format: 'statecast-checkpoint', version: 1, configFingerprint: fingerprint });
  });

  it('creates a missing directory and leaves only the checkpoint in it', async () => {
    const nested = join(dir, 'state', 'checkpoints');
    await store({ directory: nested }).save(documentFor(0));
    expect(await readdir(nested)).toEqual([FILE]);
  });

  it('replaces the previous checkpoint', async () => {
    const s = store();
    await s.save(documentFor(0));
    await s.save(documentFor(1));
    expect(await s.load()).toEqual({ kind: 'ok', doc: documentFor(1) });
  });

  it('ignores a temporary file left by a crash mid-write', async () => {
    const s = store();
    await s.save(documentFor(0));
    const leftover = join(dir, `${FILE}.tmp-4242-0`);
    await writeFile(leftover, '{"format":"statecast-checkpoint","vers');
    expect(await s.load()).toEqual({ kind: 'ok', doc: documentFor(0) });
    expect(await readFile(leftover, 'utf8')).toBe('{"format":"statecast-checkpoint","vers');
  });

  it('applies saves in the order they were requested', async () => {
    const renamed: string[] = [];
    let secondRenamed = (): void => undefined;
    const second = new Promise<void>((resolve) => (secondRenamed = resolve));
    const fs: CheckpointFileSystem = {
      ...nodeCheckpointFileSystem,
      async rename(from, to) {
        // The first save waits for the second one (or at most 200 ms), so unordered saves would end on the first.
        if (from.endsWith('-0')) await Promise.race([second, new Promise((r) => setTimeout(r, 200))]);
        await nodeCheckpointFileSystem.rename(from, to);
        renamed.push(from.slice(-2));
        if (from.endsWith('-1')) secondRenamed();
      },
    };
    const s = store({ fileSystem: fs, pid: 7 });
    await Promise.all([s.save(documentFor(0)), s.save(documentFor(1))]);
    expect(renamed).toEqual(['-0', '-1']);
    expect(await s.load()).toEqual({ kind: 'ok', doc: documentFor(1) });
  });
});

describe('checkpoint store rejecting a file', () => {
  async function savedBytes(): Promise<Buffer> {
    await store().save(documentFor(0));
    return readFile(join(dir, FILE));
  }

  async function expectRejected(problem: string, content: Uint8Array | string): Promise<void> {
    await writeFile(join(dir, FILE), content);
    const logger = warningsLogger();
    const result = await store({ logger }).load();
    const movedTo = join(dir, `${FILE}.rejected-2031-05-04T04-00-00.000Z`);
    expect(result).toMatchObject({ kind: 'rejected', problem, movedTo });
    expect(await readFile(movedTo)).toEqual(Buffer.from(content));
    expect(await readdir(dir)).not.toContain(FILE);
    expect(logger.warnings).toHaveLength(1);
    expect(logger.warnings[0]!.fields).toMatchObject({ problem, movedTo });
  }

  it.each([0, 0.5, 0.999])('moves aside a file cut to %s of its bytes as truncated', async (share) => {
    const bytes = await savedBytes();
    await expectRejected('truncated', bytes.subarray(0, Math.floor(bytes.length * share)));
  });

  it('moves aside a file whose last byte is missing as truncated', async () => {
    const bytes = await savedBytes();
    await expectRejected('truncated', bytes.subarray(0, bytes.length - 1));
  });

  it('moves aside a file with one changed byte as corrupt', async () => {
    const bytes = Buffer.from(await savedBytes());
    bytes[40] = bytes[40]! ^ 0x01;
    await expectRejected('checksum', bytes);
  });

  it('moves aside garbage', async () => {
    await expectRejected('truncated', 'tug-01 was here\n');
  });

  it('moves aside a checksummed body that is not JSON', async () => {
    const body = 'tank-a: 2.31 m';
    await expectRejected('not-json', `${body}\n#sha256:${createHash('sha256').update(body).digest('hex')}\n`);
  });

  it.each([
    ['format', { format: 'tracks' }],
    ['version', { version: 2 }],
    ['fingerprint', { configFingerprint: otherFingerprint }],
    ['shape', { estimators: [] }],
    ['shape', { writtenAt: 'yesterday' }],
  ])('moves aside a document with the wrong %s', async (problem, change) => {
    await expectRejected(problem, encodeCheckpointFile({ ...documentFor(0), ...change }));
  });

  it('moves aside something that cannot be read as a file', async () => {
    await mkdir(join(dir, FILE));
    const result = await store().load();
    expect(result).toMatchObject({ kind: 'rejected', problem: 'unreadable', reason: 'the file cannot be read (EISDIR)' });
  });

  it('keeps both files when two are rejected in the same millisecond', async () => {
    await writeFile(join(dir, FILE), 'first');
    const first = await store().load();
    await writeFile(join(dir, FILE), 'second');
    const second = await store().load();
    expect(first).toMatchObject({ movedTo: join(dir, `${FILE}.rejected-2031-05-04T04-00-00.000Z`) });
    expect(second).toMatchObject({ movedTo: join(dir, `${FILE}.rejected-2031-05-04T04-00-00.000Z-1`) });
    expect(await readFile(join(dir, `${FILE}.rejected-2031-05-04T04-00-00.000Z`), 'utf8')).toBe('first');
  });

  it('reports a file it cannot move aside as still in place', async () => {
    await writeFile(join(dir, FILE), 'garbage');
    const logger = warningsLogger();
    const result = await store({ logger, fileSystem: faultyFileSystem({ rename: 'EROFS' }) }).load();
    expect(result).toMatchObject({ kind: 'rejected', problem: 'truncated', movedTo: null });
    expect(await readFile(join(dir, FILE), 'utf8')).toBe('garbage');
    expect(logger.warnings.map((w) => w.fields)).toContainEqual(expect.objectContaining({ code: 'EROFS' }));
  });
});

describe('checkpoint store failing to write', () => {
  async function expectOldKept(save: Promise<void>, code: string, pathPattern: RegExp): Promise<void> {
    const error = await save.then(() => undefined, (e: unknown) => e);
    expect(error).toBeInstanceOf(CheckpointWriteError);
    expect(error).toMatchObject({ code, path: expect.stringMatching(pathPattern) });
    await chmod(dir, 0o755);
    expect(await store().load()).toEqual({ kind: 'ok', doc: documentFor(0) });
    expect(await readdir(dir)).toEqual([FILE]);
  }

  it('rejects with EACCES and keeps the old checkpoint when the directory is read-only', async () => {
    const s = store();
    await s.save(documentFor(0));
    await chmod(dir, 0o555);
    // As root the mode bits do not stop the write; the failure a read-only directory gives is simulated then.
    const failing = (await modeStopsWrites(dir)) ? s : store({ fileSystem: faultyFileSystem({ createExclusive: 'EACCES' }) });
    await expectOldKept(failing.save(documentFor(1)), 'EACCES', /\.tmp-\d+-\d+$/);
  });

  it('rejects with ENOSPC, removes the partial temporary file and keeps the old checkpoint when the disk fills', async () => {
    await store().save(documentFor(0));
    await expectOldKept(store({ fileSystem: faultyFileSystem({ write: 'ENOSPC' }) }).save(documentFor(1)), 'ENOSPC', /\.tmp-\d+-0$/);
  });

  it('rejects with EROFS and keeps the old checkpoint on a read-only file system', async () => {
    await store().save(documentFor(0));
    await expectOldKept(store({ fileSystem: faultyFileSystem({ createExclusive: 'EROFS' }) }).save(documentFor(1)), 'EROFS', /\.tmp-/);
  });

  it('removes the written temporary file and keeps the old checkpoint when the rename fails', async () => {
    await store().save(documentFor(0));
    await expectOldKept(store({ fileSystem: faultyFileSystem({ rename: 'EXDEV' }) }).save(documentFor(1)), 'EXDEV', new RegExp(`${FILE}$`));
  });

  it('rejects with the errno code and the directory when the directory cannot be created', async () => {
    await writeFile(join(dir, 'not-a-directory'), '');
    const directory = join(dir, 'not-a-directory', 'checkpoints');
    const error = await store({ directory }).save(documentFor(0)).then(() => undefined, (e: unknown) => e);
    expect(error).toBeInstanceOf(CheckpointWriteError);
    expect(error).toMatchObject({ code: 'ENOTDIR', path: directory, operation: 'mkdir' });
  });

  it('saves again after a failed save', async () => {
    let failNext = true;
    const fs: CheckpointFileSystem = {
      ...nodeCheckpointFileSystem,
      createExclusive(path) {
        if (!failNext) return nodeCheckpointFileSystem.createExclusive(path);
        failNext = false;
        return faultyFileSystem({ createExclusive: 'ENOSPC' }).createExclusive(path);
      },
    };
    const s = store({ fileSystem: fs });
    await expect(s.save(documentFor(0))).rejects.toBeInstanceOf(CheckpointWriteError);
    await s.save(documentFor(1));
    expect(await s.load()).toEqual({ kind: 'ok', doc: documentFor(1) });
  });
});
