/**
 * A file for replay output: text is assembled into byte blocks as it comes (ByteBlockWriter;
 * the engine's events arrive synchronously) and full blocks are written when the caller drains
 * between input chunks, a few system calls per megabyte with memory bounded.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { ByteBlockWriter } from './byte-block-writer.js';

/** See the module comment. */
export class LineFileSink {
  /** Where output text goes. */
  readonly out = new ByteBlockWriter();

  private constructor(private readonly handle: FileHandle) {}

  /** Creates (truncates) the file. */
  static async open(path: string): Promise<LineFileSink> {
    return new LineFileSink(await open(path, 'w'));
  }

  /** Writes the full blocks so far. */
  async drain(): Promise<void> {
    for (const block of this.out.takeFull()) await writeAll(this.handle, block);
  }

  /** Writes everything and closes the file. */
  async close(): Promise<void> {
    try {
      for (const block of this.out.takeAll()) await writeAll(this.handle, block);
    } finally {
      await this.handle.close();
    }
  }
}

async function writeAll(handle: FileHandle, bytes: Buffer): Promise<void> {
  let offset = 0;
  while (offset < bytes.length) {
    const { bytesWritten } = await handle.write(bytes, offset, bytes.length - offset);
    offset += bytesWritten;
  }
}
