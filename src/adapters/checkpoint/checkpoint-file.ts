/**
 * The bytes of a checkpoint file: the document as one line of JSON (the body), then a trailer
 * line with the SHA-256 of the body's bytes:
 *
 *   {"format":"statecast-checkpoint","version":1,…}\n#sha256:<64 lowercase hex>\n
 *
 * JSON.stringify escapes every newline inside strings, so the body holds none and the last
 * `\n#sha256:` always starts the trailer. A file cut short anywhere loses (part of) the
 * trailer or no longer matches its hash, so truncation and corruption are both detected
 * before a single byte of the body is trusted.
 */
import { createHash } from 'node:crypto';
import type { DocumentIssue } from './checkpoint-document.js';

/** What starts the trailer line after the body. */
export const CHECKPOINT_TRAILER = '\n#sha256:';
const HEX_LENGTH = 64;

function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

/** The file bytes for a document (throws TypeError only for a value JSON cannot hold, e.g. a BigInt). */
export function encodeCheckpointFile(doc: unknown): Uint8Array {
  const body = Buffer.from(JSON.stringify(doc), 'utf8');
  return Buffer.concat([body, Buffer.from(`${CHECKPOINT_TRAILER}${sha256Hex(body)}\n`, 'utf8')]);
}

/** The body text of a checkpoint file whose trailer matches, or what is wrong with it. */
export function decodeCheckpointFile(bytes: Uint8Array): { readonly body: string } | DocumentIssue {
  const buf = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (buf.length === 0) return { problem: 'truncated', reason: 'the file is empty' };
  const at = buf.lastIndexOf(CHECKPOINT_TRAILER);
  if (at < 0) return { problem: 'truncated', reason: 'no checksum line at the end: the file is cut short or is not a checkpoint' };
  const trailer = buf.subarray(at + CHECKPOINT_TRAILER.length).toString('latin1');
  if (!new RegExp(`^[0-9a-f]{${HEX_LENGTH}}\\n$`).test(trailer)) {
    return { problem: 'truncated', reason: 'the checksum line is incomplete: the file is cut short' };
  }
  const body = buf.subarray(0, at);
  const expected = trailer.slice(0, HEX_LENGTH);
  const actual = sha256Hex(body);
  if (actual !== expected) {
    return { problem: 'checksum', reason: `the body's SHA-256 is ${actual} but the file says ${expected}: the file is corrupt` };
  }
  try {
    return { body: new TextDecoder('utf-8', { fatal: true }).decode(body) };
  } catch {
    return { problem: 'not-json', reason: 'the body is not UTF-8 text' };
  }
}
