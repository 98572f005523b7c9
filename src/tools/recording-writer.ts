/**
 * Writes a recording: the header, then message lines, buffered so a busy broker costs one file
 * write per ~256 KiB rather than per message, and rotated past a size limit into numbered parts
 * (`out.jsonl`, `out.1.jsonl`, `out.2.jsonl`, …), each with its own header so every part
 * replays on its own.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { extname } from 'node:path';
import { recordingHeaderLine } from './recording-format.js';

const FLUSH_BYTES = 256 * 1024;

/** Settings of a RecordingWriter. */
export interface RecordingWriterOptions {
  /** ISO 8601 start of the recording, repeated in every part's header. */
  readonly startedAt: string;
  /** Where the messages come from (header `source`). */
  readonly source: string;
  /** Rotate before a part would exceed this many bytes (default: never). */
  readonly maxBytes?: number;
}

/** The file name of part k (0 is the path itself). */
export function recordingPartPath(path: string, part: number): string {
  if (part === 0) return path;
  const ext = extname(path);
  return ext === '' ? `${path}.${part}` : `${path.slice(0, -ext.length)}.${part}${ext}`;
}

/** A buffered, rotating recording file. Writes are ordered; errors surface from flush/close. */
export class RecordingWriter {
  /** Every file written so far, in order. */
  readonly files: string[] = [];
  private handle: FileHandle | null = null;
  private part = 0;
  private partBytes = 0;
  private pending = '';
  private pendingBytes = 0;
  private chain: Promise<void> = Promise.resolve();
  private failure: unknown = null;

  private constructor(private readonly path: string, private readonly options: RecordingWriterOptions) {}

  /** Creates (truncates) the first file and writes its header. */
  static async open(path: string, options: RecordingWriterOptions): Promise<RecordingWriter> {
    const writer = new RecordingWriter(path, options);
    await writer.openPart(0);
    writer.partBytes = writer.headerBytes(0);
    return writer;
  }

  /** Appends one line (newline included); flushes in the background when enough is buffered. */
  write(line: string): void {
    const bytes = Buffer.byteLength(line);
    const max = this.options.maxBytes;
    if (max !== undefined && this.partBytes + bytes > max && this.partBytes > this.headerBytes(this.part)) {
      this.enqueueFlush();
      this.part += 1;
      const part = this.part;
      this.chain = this.chain.then(() => this.rotate(part));
      this.partBytes = this.headerBytes(part);
    }
    this.pending += line;
    this.pendingBytes += bytes;
    this.partBytes += bytes;
    if (this.pendingBytes >= FLUSH_BYTES) this.enqueueFlush();
  }

  /** Writes everything buffered; rejects with the first write error. */
  async flush(): Promise<void> {
    this.enqueueFlush();
    await this.chain;
    if (this.failure !== null) throw this.failure;
  }

  /** Flushes and closes the current file. */
  async close(): Promise<void> {
    this.enqueueFlush();
    this.chain = this.chain.then(async () => {
      await this.handle?.close();
      this.handle = null;
    });
    await this.chain;
    if (this.failure !== null) throw this.failure;
  }

  private headerLine(part: number): string {
    return recordingHeaderLine(this.options.startedAt, this.options.source, part === 0 ? undefined : part);
  }

  private headerBytes(part: number): number {
    return Buffer.byteLength(this.headerLine(part));
  }

  private enqueueFlush(): void {
    if (this.pending === '') return;
    const text = this.pending;
    this.pending = '';
    this.pendingBytes = 0;
    this.chain = this.chain.then(async () => {
      if (this.failure !== null || this.handle === null) return;
      try {
        await this.handle.write(text);
      } catch (error) {
        this.failure = error;
      }
    });
  }

  private async rotate(part: number): Promise<void> {
    if (this.failure !== null) return;
    try {
      await this.handle?.close();
      await this.openPart(part);
    } catch (error) {
      this.failure = error;
    }
  }

  private async openPart(part: number): Promise<void> {
    const file = recordingPartPath(this.path, part);
    this.handle = await open(file, 'w');
    await this.handle.write(this.headerLine(part));
    this.files.push(file);
  }
}
