/**
 * The replay output line, one JSON object per estimate (JSON Lines):
 *   {"t":1767225600.1,"estimator":"yard","entity":"tug-01","kind":"filtered",
 *    "state":{"east":12.5,…},"covariance":[[…],…],
 *    "nis":[{"sensor":"wheel","t":1767225600.1,"nis":0.41}]}
 * `t` is the estimate's event time in epoch seconds; `kind` is `filtered` (after an update),
 * `predicted` (fixed-rate publishing), `lag-smoothed` (the daemon's fixed-lag smoother) or
 * `smoothed` (the whole-batch RTS pass of `replay --smooth`); `covariance` is P row by row;
 * `nis` lists the NIS of every measurement applied to the entity since its previous estimate
 * (null for the one that initialized the track; empty for smoothed lines). Times and state are
 * written in full (shortest round-trip) precision, covariance and NIS entries with nine
 * significant digits. Non-finite numbers are written as null.
 *
 * Number text dominates the cost of a line (String(v) costs several hundred nanoseconds here),
 * so times, covariance (each off-diagonal pair once) and NIS values are written as digits
 * straight into the output bytes; only the state takes String(). Reading the engine's own
 * payload text instead was measured slower: that string is built by concatenation, and the
 * first read of it flattens the whole of it.
 */
import type { ByteBlockWriter } from './byte-block-writer.js';
import { writeCompactNumber } from './compact-number.js';

/** Bytes a compact number may take (see writeCompactNumber). */
const CELL_BYTES = 32;
const COVARIANCE_KEY = Buffer.from(',"covariance":[');
const COMMA = 0x2c;
const OPEN = 0x5b;
const CLOSE = 0x5d;

/** JSON has no NaN or Infinity: those become null so every line parses. */
export function jsonNumber(v: number): string {
  return Number.isFinite(v) ? String(v) : 'null';
}

/** The NIS of the measurements applied to one entity since its last estimate, written with it. */
export class PendingNis {
  private readonly sensorFragments: string[] = [];
  private readonly times: number[] = [];
  private readonly values: number[] = [];

  /** Adds one entry; sensorFragment is `{"sensor":"name","t":`. */
  add(sensorFragment: string, tS: number, nis: number): void {
    this.sensorFragments.push(sensorFragment);
    this.times.push(tS);
    this.values.push(nis);
  }

  /** Writes the entries as JSON array items and empties the list. */
  writeTo(out: ByteBlockWriter): void {
    for (let i = 0; i < this.times.length; i++) {
      out.text(i === 0 ? this.sensorFragments[i]! : `,${this.sensorFragments[i]!}`);
      out.time(this.times[i]!);
      out.text(',"nis":');
      out.number(this.values[i]!);
      out.text('}');
    }
    this.clear();
  }

  /** Forgets the entries. */
  clear(): void {
    this.sensorFragments.length = 0;
    this.times.length = 0;
    this.values.length = 0;
  }
}

/** Writes the output lines of one estimator. */
export class EstimateLineFormatter {
  private readonly n: number;
  private readonly head: string;
  private readonly stateKeys: string[];
  /** Digits of the upper-triangle cells of the covariance being written, and their lengths. */
  private readonly cells: Uint8Array;
  private readonly cellLength: Int32Array;

  /** Prepares the key fragments of an estimator's state names. */
  constructor(estimator: string, stateNames: readonly string[]) {
    this.n = stateNames.length;
    this.head = `,"estimator":${JSON.stringify(estimator)},"entity":`;
    this.stateKeys = stateNames.map((s, i) => `${i === 0 ? '"state":{' : ','}${JSON.stringify(s)}:`);
    this.cells = new Uint8Array(this.n * this.n * CELL_BYTES);
    this.cellLength = new Int32Array(this.n * this.n);
  }

  /** Writes the line of one estimate x, P at tS (nis: the entries to list, or null for none). */
  write(out: ByteBlockWriter, tS: number, entityJson: string, kind: string, x: Float64Array, P: Float64Array, nis: PendingNis | null): void {
    const n = this.n;
    out.text('{"t":');
    out.time(tS);
    out.text(this.head);
    out.text(entityJson);
    out.text(`,"kind":"${kind}",`);
    for (let i = 0; i < n; i++) {
      out.text(this.stateKeys[i]!);
      out.text(jsonNumber(x[i]!));
    }
    out.text('}');
    this.writeCovariance(out, P);
    out.text(',"nis":[');
    nis?.writeTo(out);
    out.text(']}\n');
  }

  /** `,"covariance":[[…],…]`. */
  private writeCovariance(out: ByteBlockWriter, P: Float64Array): void {
    const n = this.n;
    // The core keeps P exactly symmetric, so each off-diagonal pair is formatted once.
    for (let i = 0; i < n; i++) {
      for (let j = i; j < n; j++) {
        const k = i * n + j;
        this.cellLength[k] = writeCompactNumber(this.cells, k * CELL_BYTES, P[k]!) - k * CELL_BYTES;
      }
    }
    // One reservation for the whole matrix, then plain byte stores: this runs once per estimate.
    const b = out.reserve(n * n * (CELL_BYTES + 1) + 2 * n + COVARIANCE_KEY.length + 1);
    let pos = out.position;
    for (let i = 0; i < COVARIANCE_KEY.length; i++) b[pos++] = COVARIANCE_KEY[i]!;
    for (let i = 0; i < n; i++) {
      if (i > 0) b[pos++] = COMMA;
      b[pos++] = OPEN;
      for (let j = 0; j < n; j++) {
        if (j > 0) b[pos++] = COMMA;
        const k = j >= i ? i * n + j : j * n + i;
        const from = k * CELL_BYTES;
        const to = from + this.cellLength[k]!;
        for (let c = from; c < to; c++) b[pos++] = this.cells[c]!;
      }
      b[pos++] = CLOSE;
    }
    b[pos++] = CLOSE;
    out.position = pos;
  }
}
