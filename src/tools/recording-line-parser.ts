/**
 * Parses one message line of a recording (see recording-format.ts). The fast path walks the
 * bytes of a line in the exact shape writers emit (`{"t":…,"topic":"…","payload":"…"}`) and
 * unescapes the payload straight into a reused byte buffer, so a replay pays neither JSON.parse
 * nor a string round trip per message; anything else (other key order, whitespace, `\u`
 * escapes, base64 payloads, errors) goes through JSON.parse and a field check.
 */

const QUOTE = 0x22;
const BACKSLASH = 0x5c;
const PREFIX = Buffer.from('{"t":');
const TOPIC_KEY = Buffer.from(',"topic":"');
const PAYLOAD_KEY = Buffer.from('","payload":"');
const BASE64 = /^(?:[A-Za-z0-9+/]{4})*(?:[A-Za-z0-9+/]{2}==|[A-Za-z0-9+/]{3}=)?$/;

/** What a message line must hold; the wording the reader reports for a line of the wrong shape. */
export const MESSAGE_SHAPE = 'expected an object with t, topic and payload';

/** Reusable parser; after a successful parse, tMs, topic and payload describe the line. */
export class RecordingLineParser {
  tMs = 0;
  topic = '';
  /** The payload bytes; a view of a reused buffer, valid until the next parse. */
  payload: Uint8Array = new Uint8Array(0);
  private scratch = Buffer.alloc(4096);

  /** Parses buf[start, end) (no newline); returns null when it is a message line, else the problem. */
  parse(buf: Buffer, start: number, end: number): string | null {
    if (end > start && buf[end - 1] === 0x0d) end -= 1;
    return this.fast(buf, start, end) ? null : this.slow(buf.toString('utf8', start, end));
  }

  private fast(buf: Buffer, start: number, end: number): boolean {
    if (!startsWith(buf, start, end, PREFIX)) return false;
    let p = start + PREFIX.length;
    const numberStart = p;
    let integer = 0;
    let plain = true;
    while (p < end && buf[p] !== 0x2c) {
      const c = buf[p]!;
      if (c >= 0x30 && c <= 0x39) integer = integer * 10 + (c - 0x30);
      else plain = false;
      p += 1;
    }
    if (p === numberStart) return false;
    // Digits only and within 2^53: the sum above is exact; anything else takes Number's rules.
    const t = plain && p - numberStart <= 15 ? integer : Number(buf.toString('latin1', numberStart, p));
    if (!Number.isFinite(t)) return false;
    if (!startsWith(buf, p, end, TOPIC_KEY)) return false;
    p += TOPIC_KEY.length;
    const topicStart = p;
    let ascii = true;
    while (p < end) {
      const c = buf[p]!;
      if (c === QUOTE) break;
      if (c === BACKSLASH || c < 0x20) return false;
      if (c >= 0x80) ascii = false;
      p += 1;
    }
    if (p === topicStart || !startsWith(buf, p, end, PAYLOAD_KEY)) return false;
    const topic = buf.toString(ascii ? 'latin1' : 'utf8', topicStart, p);
    p += PAYLOAD_KEY.length;
    if (this.scratch.length < end - p) this.scratch = Buffer.alloc(2 * (end - p));
    const out = this.scratch;
    let n = 0;
    for (;;) {
      if (p >= end) return false;
      let c = buf[p]!;
      if (c === QUOTE) break;
      if (c < 0x20) return false;
      if (c === BACKSLASH) {
        p += 1;
        c = unescaped(buf[p]);
        if (c < 0) return false;
      }
      out[n++] = c;
      p += 1;
    }
    if (p + 2 !== end || buf[p + 1] !== 0x7d) return false;
    this.tMs = t;
    this.topic = topic;
    this.payload = out.subarray(0, n);
    return true;
  }

  private slow(text: string): string | null {
    let value: unknown;
    try {
      value = JSON.parse(text);
    } catch {
      return `not valid JSON (${MESSAGE_SHAPE})`;
    }
    if (typeof value !== 'object' || value === null || Array.isArray(value)) return MESSAGE_SHAPE;
    const v = value as Record<string, unknown>;
    const { t, topic, payload, payloadBase64 } = v;
    if (typeof t !== 'number' || typeof topic !== 'string') return MESSAGE_SHAPE;
    if (!Number.isFinite(t)) return 't must be a finite number of epoch milliseconds';
    if (topic === '') return 'topic must not be empty';
    if (typeof payload === 'string' && payloadBase64 === undefined) {
      this.payload = Buffer.from(payload, 'utf8');
    } else if (typeof payloadBase64 === 'string' && payload === undefined) {
      if (!BASE64.test(payloadBase64)) return 'payloadBase64 is not valid base64';
      this.payload = Buffer.from(payloadBase64, 'base64');
    } else if (payload !== undefined && payloadBase64 !== undefined) {
      return 'a message has either payload or payloadBase64, not both';
    } else {
      return MESSAGE_SHAPE;
    }
    this.tMs = t;
    this.topic = topic;
    return null;
  }
}

function startsWith(buf: Buffer, at: number, end: number, key: Buffer): boolean {
  if (end - at < key.length) return false;
  for (let i = 0; i < key.length; i++) if (buf[at + i] !== key[i]) return false;
  return true;
}

/** The byte a JSON escape stands for; −1 for \u (left to JSON.parse) and unknown escapes. */
function unescaped(c: number | undefined): number {
  switch (c) {
    case 0x22: return 0x22;
    case 0x5c: return 0x5c;
    case 0x2f: return 0x2f;
    case 0x62: return 0x08;
    case 0x66: return 0x0c;
    case 0x6e: return 0x0a;
    case 0x72: return 0x0d;
    case 0x74: return 0x09;
    default: return -1;
  }
}
