/**
 * The statecast recording format (version 1): what `record` writes and `replay` and `report`
 * read. It is JSON Lines (one JSON value per line, UTF-8, `\n` separated):
 *
 * - Line 1 is a header object:
 *   `{"format":"statecast-recording","version":1,"startedAt":"2026-01-01T00:00:00.000Z","source":"mqtt://127.0.0.1:1883"}`
 *   `startedAt` is ISO 8601 (UTC); `source` says where the messages came from (a broker URL or
 *   `simulator:<scenario>`). A rotated part (see `record --max-bytes`) repeats the header with
 *   `"part": k` (1, 2, …); the first file has no `part`. Readers ignore header fields they do
 *   not know.
 * - Every other line is one received MQTT message:
 *   `{"t":1767225600123,"topic":"farm/tank-a/level","payload":"{\"level_m\":4.213}"}`
 *   `t` is the arrival time in epoch milliseconds (the replay's clock), `topic` the MQTT topic,
 *   `payload` the payload bytes as UTF-8 text. When the bytes are not valid UTF-8 the line has
 *   `"payloadBase64"` (RFC 4648 base64 of the bytes) instead of `"payload"`.
 * - Writers emit the keys in the order shown and no whitespace, so a reader can take a fast
 *   path over the bytes; any other valid JSON with the same fields is read too. Empty lines are
 *   skipped. Lines are in arrival order; `t` need not be monotonic (clock steps are kept as
 *   recorded).
 */
import { isUtf8 } from 'node:buffer';

/** The `format` value of a recording header. */
export const RECORDING_FORMAT = 'statecast-recording';
/** The version this build writes and reads. */
export const RECORDING_VERSION = 1;

/** The first line of a recording file. */
export interface RecordingHeader {
  readonly format: typeof RECORDING_FORMAT;
  readonly version: typeof RECORDING_VERSION;
  /** ISO 8601 time the recording (not this part) started. */
  readonly startedAt: string;
  /** Where the messages came from, e.g. a broker URL or `simulator:tank-farm`. */
  readonly source: string;
  /** Index of a rotated part (1, 2, …); absent in the first file. */
  readonly part?: number;
}

/** The header line, newline included. */
export function recordingHeaderLine(startedAt: string, source: string, part?: number): string {
  const header: RecordingHeader = { format: RECORDING_FORMAT, version: RECORDING_VERSION, startedAt, source, ...(part === undefined ? {} : { part }) };
  return `${JSON.stringify(header)}\n`;
}

/** One message line (newline included): UTF-8 text as `payload`, other bytes as `payloadBase64`. */
export function recordingMessageLine(tMs: number, topic: string, payload: Uint8Array): string {
  if (isUtf8(payload)) {
    const text = Buffer.from(payload.buffer, payload.byteOffset, payload.byteLength).toString('utf8');
    return recordingTextLine(tMs, topic, text);
  }
  const base64 = Buffer.from(payload.buffer, payload.byteOffset, payload.byteLength).toString('base64');
  return `{"t":${tMs},"topic":${JSON.stringify(topic)},"payloadBase64":"${base64}"}\n`;
}

/** A message line for a payload already held as text (the simulator's JSON). */
export function recordingTextLine(tMs: number, topic: string, payload: string): string {
  return `{"t":${tMs},"topic":${JSON.stringify(topic)},"payload":${JSON.stringify(payload)}}\n`;
}

/**
 * Checks a parsed header; returns null when it is one this build reads, else what is wrong.
 */
export function headerProblem(value: unknown): string | null {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    return `expected a header object with "format":"${RECORDING_FORMAT}"`;
  }
  const h = value as Record<string, unknown>;
  if (h['format'] !== RECORDING_FORMAT) return `not a statecast recording (expected a header with "format":"${RECORDING_FORMAT}")`;
  if (h['version'] !== RECORDING_VERSION) {
    return `unsupported recording version ${JSON.stringify(h['version'])} (this build reads version ${RECORDING_VERSION})`;
  }
  if (typeof h['startedAt'] !== 'string' || typeof h['source'] !== 'string') return 'the header needs "startedAt" and "source" strings';
  return null;
}
