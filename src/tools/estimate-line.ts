/**
 * The replay output line, one JSON object per estimate (JSON Lines):
 *   {"t":1767225600.1,"estimator":"yard","entity":"tug-01","kind":"filtered",
 *    "state":{"east":12.5,…},"covariance":[[…],…],
 *    "nis":[{"sensor":"wheel","t":1767225600.1,"nis":0.41}]}
 * `t` is the estimate's event time in epoch seconds; `kind` is `filtered` (after an update),
 * `predicted` (fixed-rate publishing), `lag-smoothed` (the daemon's fixed-lag smoother) or
 * `smoothed` (the whole-batch RTS pass of `replay --smooth`); `covariance` is P row by row;
 * `nis` lists the NIS of every measurement applied to the entity since its previous estimate
 * (null for the one that initialized the track; empty for smoothed lines). Time and state are
 * written in full (shortest round-trip) precision, covariance and NIS entries with nine
 * significant digits. Non-finite numbers are written as null.
 *
 * Number formatting dominates the cost of a line, so a filtered line reuses the time and state
 * text of the engine's own estimate payload (already formatted once) and writes the covariance
 * (each off-diagonal pair once) and NIS values as digits straight into the output bytes.
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

/**
 * The NIS of the measurements applied to one entity since its last estimate, kept as numbers
 * and written with the estimate (the time text is then usually the estimate's own).
 */
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

  /** Writes the entries as JSON array items and empties the list; tText is the text of time tS. */
  writeTo(out: ByteBlockWriter, tS: number, tText: string): void {
    for (let i = 0; i < this.times.length; i++) {
      const t = this.times[i]!;
      out.text(i === 0 ? this.sensorFragments[i]! : `,${this.sensorFragments[i]!}`);
      out.text(t === tS ? tText : jsonNumber(t));
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
    this.cells = new Uint8Array(this.n * this.n * CELL_BYTES);
    this.cellLength = new Int32Array(this.n * this.n);
    this.head = `,"estimator":${JSON.stringify(estimator)},"entity":`;
    this.stateKeys = stateNames.map((s, i) => `${i === 0 ? '' : ','}${JSON.stringify(s)}:`);
  }

  /**
   * Writes the line of an engine estimate: its payload gives the time and state text, P the
   * covariance. Formats x instead when the payload does not have the expected shape.
   */
  writeFromPayload(
    out: ByteBlockWriter, payload: string, entityJson: string, kind: string,
    tS: number, x: Float64Array, P: Float64Array, nis: PendingNis,
  ): void {
    const spliced = spliceTimeState(payload);
    if (spliced === null) {
      this.writeFromState(out, tS, entityJson, kind, x, P, nis);
      return;
    }
    this.writeHead(out, spliced.t, entityJson, kind);
    out.text(spliced.state);
    this.writeTail(out, P, nis, tS, spliced.t);
  }

  /** Writes a line formatted from x and P (smoothed estimates, or a payload of unexpected shape). */
  writeFromState(out: ByteBlockWriter, tS: number, entityJson: string, kind: string, x: Float64Array, P: Float64Array, nis: PendingNis | null): void {
    const tText = jsonNumber(tS);
    this.writeHead(out, tText, entityJson, kind);
    let state = '"state":{';
    for (let i = 0; i < this.n; i++) state += this.stateKeys[i]! + jsonNumber(x[i]!);
    out.text(`${state}}`);
    this.writeTail(out, P, nis, tS, tText);
  }

  private writeHead(out: ByteBlockWriter, tText: string, entityJson: string, kind: string): void {
    out.text('{"t":');
    out.text(tText);
    out.text(this.head);
    out.text(entityJson);
    out.text(`,"kind":"${kind}",`);
  }

  /** `,"covariance":[[…]],"nis":[…]}` and the newline. */
  private writeTail(out: ByteBlockWriter, P: Float64Array, nis: PendingNis | null, tS: number, tText: string): void {
    const n = this.n;
    // The core keeps P exactly symmetric, so each off-diagonal pair is formatted once.
    for (let i = 0; i < n; i++) {
      for (let j = i; j < n; j++) {
        const k = i * n + j;
        this.cellLength[k] = writeCompactNumber(this.cells, k * CELL_BYTES, P[k]!) - k * CELL_BYTES;
      }
    }
    // One reservation for the whole matrix, then plain byte stores: this runs once per estimate.
    const b = out.reserve(n * n * (CELL_BYTES + 1) + 2 * n + COVARIANCE_KEY.length + 2);
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
    out.position = pos;
    out.text('],"nis":[');
    nis?.writeTo(out, tS, tText);
    out.text(']}\n');
  }
}

const T_KEY = ',"t":';
const TIME_KEY = ',"time":';
const STATE_KEY = '"state":{';

/**
 * The `t` text and the `"state":{…}` text of an estimate payload (see
 * engine/estimate-message.ts), or null when the payload does not have that shape. A `"` inside
 * a JSON string is always escaped, so these key patterns cannot match inside an entity name.
 */
export function spliceTimeState(payload: string): { t: string; state: string } | null {
  const t0 = payload.indexOf(T_KEY);
  if (t0 < 0) return null;
  const t1 = payload.indexOf(TIME_KEY, t0);
  const s0 = t1 < 0 ? -1 : payload.indexOf(STATE_KEY, t1);
  const s1 = s0 < 0 ? -1 : payload.indexOf('}', s0 + STATE_KEY.length);
  if (s1 < 0) return null;
  return { t: payload.slice(t0 + T_KEY.length, t1), state: payload.slice(s0, s1 + 1) };
}
