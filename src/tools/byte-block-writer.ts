/**
 * Output text assembled straight into large byte blocks: ASCII strings are copied a character
 * at a time (cheaper than a native call for short fragments), other text is UTF-8 encoded,
 * and bulk numbers and times are written as digits (writeCompactNumber, writeTimeSeconds), so
 * the replay's output path makes little garbage. Full blocks are handed out with takeFull.
 */
import { writeCompactNumber, writeTimeSeconds } from './compact-number.js';

const BLOCK_BYTES = 1 << 20;
/** Room writeCompactNumber may need. */
const NUMBER_BYTES = 32;

/** See the module comment. */
export class ByteBlockWriter {
  private block = Buffer.allocUnsafe(BLOCK_BYTES);
  private used = 0;
  private full: Buffer[] = [];
  private total = 0;

  /** Bytes written so far. */
  get bytesWritten(): number {
    return this.total + this.used;
  }

  /** Appends a string as UTF-8. */
  text(s: string): void {
    const n = s.length;
    this.ensure(3 * n);
    const b = this.block;
    let pos = this.used;
    for (let i = 0; i < n; i++) {
      const c = s.charCodeAt(i);
      if (c >= 0x80) {
        this.used = pos + b.write(s.slice(i), pos, 'utf8');
        return;
      }
      b[pos++] = c;
    }
    this.used = pos;
  }

  /** Appends a number with at most nine significant digits (null when not finite). */
  number(v: number): void {
    this.ensure(NUMBER_BYTES);
    this.used = writeCompactNumber(this.block, this.used, v);
  }

  /** Appends a time in seconds with the text String(tS) gives (see writeTimeSeconds). */
  time(tS: number): void {
    this.ensure(NUMBER_BYTES);
    this.used = writeTimeSeconds(this.block, this.used, tS);
  }

  /** Appends src[start, start + length) (ASCII or UTF-8 bytes). */
  copy(src: Uint8Array, start: number, length: number): void {
    this.ensure(length);
    const b = this.block;
    let pos = this.used;
    for (let i = 0; i < length; i++) b[pos++] = src[start + i]!;
    this.used = pos;
  }

  /**
   * Room for `bytes` more bytes: returns the current block, whose bytes from `position` on the
   * caller may fill directly before moving `position` past them (for runs of small writes).
   */
  reserve(bytes: number): Buffer {
    this.ensure(bytes);
    return this.block;
  }

  /** Where the next byte goes in the block returned by reserve. */
  get position(): number {
    return this.used;
  }

  set position(pos: number) {
    this.used = pos;
  }

  /** The full blocks since the last call, in order. */
  takeFull(): Buffer[] {
    const out = this.full;
    this.full = [];
    return out;
  }

  /** Everything not yet taken (full blocks, then the current one), emptying the writer. */
  takeAll(): Buffer[] {
    const out = this.takeFull();
    if (this.used > 0) out.push(this.block.subarray(0, this.used));
    this.total += this.used;
    this.block = Buffer.allocUnsafe(BLOCK_BYTES);
    this.used = 0;
    return out;
  }

  private ensure(bytes: number): void {
    if (this.used + bytes <= this.block.length) return;
    if (this.used > 0) this.full.push(this.block.subarray(0, this.used));
    this.total += this.used;
    this.block = Buffer.allocUnsafe(Math.max(BLOCK_BYTES, bytes));
    this.used = 0;
  }
}
