/**
 * Streams a recording file line by line: large chunked reads, a newline scan over the bytes
 * and the fast line parser, so reading costs a small share of a replay. Malformed input stops
 * the read with a RecordingFormatError naming the file and line.
 */
import { open } from 'node:fs/promises';
import { headerProblem, type RecordingHeader } from './recording-format.js';
import { RecordingLineParser } from './recording-line-parser.js';

const CHUNK_BYTES = 1 << 20;
/** Longest line accepted (a payload far beyond any MQTT broker's default limit). */
const MAX_LINE_BYTES = 64 << 20;

/** A recording line that is not what the format says; the message reads `file:line: problem`. */
export class RecordingFormatError extends Error {
  constructor(readonly file: string, readonly line: number, readonly problem: string) {
    super(`${file}:${line}: ${problem}`);
    this.name = 'RecordingFormatError';
  }
}

/** Receives each message; payload is a reused view, valid only during the call. */
export type RecordingVisitor = (tMs: number, topic: string, payload: Uint8Array) => void;

/** Options of readRecording. */
export interface ReadRecordingOptions {
  /** Stops the read between chunks; the result then has aborted = true. */
  readonly signal?: AbortSignal;
  /**
   * Called after each chunk (about 1 MiB) with the bytes read so far and the file size; a
   * returned promise is awaited before the next read, which lets the caller drain its output.
   */
  readonly afterChunk?: (bytesRead: number, totalBytes: number) => Promise<void> | void;
}

/** What a read saw. */
export interface ReadRecordingResult {
  /** Null only when the read was aborted before the header. */
  readonly header: RecordingHeader | null;
  readonly messages: number;
  readonly lines: number;
  readonly aborted: boolean;
}

/**
 * Reads `path`, checking the header and calling visit for every message line in order.
 * Throws RecordingFormatError for malformed content and the fs error for I/O problems.
 */
export async function readRecording(path: string, visit: RecordingVisitor, options: ReadRecordingOptions = {}): Promise<ReadRecordingResult> {
  const file = await open(path, 'r');
  try {
    const totalBytes = (await file.stat()).size;
    const parser = new RecordingLineParser();
    let buf = Buffer.allocUnsafe(2 * CHUNK_BYTES);
    let filled = 0;
    let bytesRead = 0;
    let line = 0;
    let messages = 0;
    let header: RecordingHeader | null = null;
    const take = (start: number, end: number): void => {
      line += 1;
      if (end === start || (end === start + 1 && buf[start] === 0x0d)) return;
      if (header === null) {
        header = parseHeader(path, line, buf.toString('utf8', start, end));
        return;
      }
      const problem = parser.parse(buf, start, end);
      if (problem !== null) throw new RecordingFormatError(path, line, problem);
      messages += 1;
      visit(parser.tMs, parser.topic, parser.payload);
    };
    for (;;) {
      if (options.signal?.aborted === true) return { header, messages, lines: line, aborted: true };
      if (buf.length - filled < CHUNK_BYTES) {
        if (buf.length >= MAX_LINE_BYTES) throw new RecordingFormatError(path, line + 1, `line longer than ${MAX_LINE_BYTES} bytes`);
        const bigger = Buffer.allocUnsafe(buf.length * 2);
        buf.copy(bigger, 0, 0, filled);
        buf = bigger;
      }
      const { bytesRead: n } = await file.read(buf, filled, CHUNK_BYTES, null);
      bytesRead += n;
      if (n === 0) {
        if (filled > 0) take(0, filled);
        break;
      }
      const end = filled + n;
      const view = buf.subarray(0, end);
      let start = 0;
      for (let nl = view.indexOf(0x0a, filled); nl >= 0; nl = view.indexOf(0x0a, nl + 1)) {
        take(start, nl);
        start = nl + 1;
      }
      // Keep the unfinished line at the front for the next read.
      buf.copy(buf, 0, start, end);
      filled = end - start;
      await options.afterChunk?.(bytesRead, totalBytes);
    }
    return { header: header ?? missingHeader(path), messages, lines: line, aborted: false };
  } finally {
    await file.close();
  }
}

function parseHeader(path: string, line: number, text: string): RecordingHeader {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch {
    throw new RecordingFormatError(path, line, 'not valid JSON: a recording starts with a header line {"format":"statecast-recording",...}');
  }
  const problem = headerProblem(value);
  if (problem !== null) throw new RecordingFormatError(path, line, problem);
  return value as RecordingHeader;
}

function missingHeader(path: string): never {
  throw new RecordingFormatError(path, 1, 'the file is empty: a recording starts with a header line');
}
