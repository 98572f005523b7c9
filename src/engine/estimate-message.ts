import type { HealthSummary } from './health-change.js';

/** What an estimate is: x̂(n|n) after an update, x̂(t|n) predicted to a publish time, or x̂(n−L|n). */
export type EstimateKind = 'filtered' | 'predicted' | 'smoothed';

/** Version of the published estimate payload (bumped on any incompatible change). */
export const ESTIMATE_PAYLOAD_VERSION = 1;

/**
 * The estimate payload published on MQTT and pushed on WebSocket (documented in the README):
 * `{ v, estimator, entity, kind, t, time, state: {name: value}, sigma: {name: σ},
 *    covariance?: P rows, coastS, stale, health: { state, reasons } }`.
 *
 * Built as a string from key fragments prepared once per estimator, so publishing an estimate
 * does not build and then stringify an object tree. Numbers keep String()'s shortest
 * round-trip text; `t` and `time` come from EstimateTimeText, which reuses the text of the
 * previous second (Date.prototype.toISOString alone cost more than all the state's numbers).
 */
export class EstimateSerializer {
  private readonly stateKeys: string[];
  private readonly head: string;
  private readonly times = new EstimateTimeText();

  /** Prepares the fragments for one estimator's state names. */
  constructor(readonly estimator: string, readonly stateNames: readonly string[], readonly includeCovariance: boolean) {
    this.stateKeys = stateNames.map((s, i) => `${i === 0 ? '' : ','}${JSON.stringify(s)}:`);
    this.head = `{"v":${ESTIMATE_PAYLOAD_VERSION},"estimator":${JSON.stringify(estimator)},"entity":`;
  }

  /** The payload for one estimate; x (P) and P (P×P) are read, never kept. */
  serialize(
    entity: string, kind: EstimateKind, tS: number, x: Float64Array, P: Float64Array,
    coastS: number, stale: boolean, health: HealthSummary,
  ): string {
    return this.serializeEntityJson(JSON.stringify(entity), kind, tS, x, P, coastS, stale, health);
  }

  /** serialize() for an entity whose JSON text (JSON.stringify(entity)) the caller keeps. */
  serializeEntityJson(
    entityJson: string, kind: EstimateKind, tS: number, x: Float64Array, P: Float64Array,
    coastS: number, stale: boolean, health: HealthSummary,
  ): string {
    const n = this.stateNames.length;
    const times = this.times;
    times.set(tS);
    let s = `${this.head}${entityJson},"kind":"${kind}","t":${times.seconds},"time":"${times.iso}","state":{`;
    for (let i = 0; i < n; i++) s += this.stateKeys[i]! + num(x[i]!);
    s += '},"sigma":{';
    for (let i = 0; i < n; i++) s += this.stateKeys[i]! + num(Math.sqrt(Math.max(0, P[i * n + i]!)));
    s += '}';
    if (this.includeCovariance) {
      s += ',"covariance":[';
      for (let i = 0; i < n; i++) {
        s += i === 0 ? '[' : ',[';
        for (let j = 0; j < n; j++) s += (j === 0 ? '' : ',') + num(P[i * n + j]!);
        s += ']';
      }
      s += ']';
    }
    s += `,"coastS":${coastS === 0 ? '0' : num(coastS)},"stale":${stale},"health":{"state":"${health.state}","reasons":[`;
    for (let i = 0; i < health.reasons.length; i++) s += `${i === 0 ? '' : ','}"${health.reasons[i]}"`;
    return `${s}]}}`;
  }
}

/** JSON has no NaN or Infinity: those become null so the payload always parses. */
function num(v: number): string {
  return Number.isFinite(v) ? String(v) : 'null';
}

/** Years 0000–9999, where toISOString has its fixed 24-character form. */
const MAX_PLAIN_ISO_MS = 253_402_300_800_000;
/** Per millisecond of a second: `.1`-style fractions of String(tS) ('' for 0) and `.100Z`. */
const FRACTION_TEXT = Array.from({ length: 1000 }, (_, ms) => (ms === 0 ? '' : `.${String(ms).padStart(3, '0').replace(/0+$/, '')}`));
const ISO_MS_TEXT = Array.from({ length: 1000 }, (_, ms) => `.${String(ms).padStart(3, '0')}Z`);

/**
 * `t` (String(tS)) and `time` (ISO 8601 UTC) of an estimate time, remembering the text of the
 * whole second last seen: estimates come in time order, many per second, so the costly
 * conversions run about once a second. A time on a whole millisecond in [0, 10^12) s reads as
 * its millisecond digits with the point three places in, trailing zeros dropped, which is the
 * shortest text that reads back as tS (doubles there are spaced far below 1 ms), i.e. String's;
 * other times take String() and toISOString() directly.
 */
export class EstimateTimeText {
  /** String(tS), or 'null' when not finite. */
  seconds = '';
  /** The ISO 8601 text of tS ('' when it has none). */
  iso = '';
  private second = Number.NaN;
  private secondText = '';
  private secondIso = '';

  /** Sets seconds and iso for tS. */
  set(tS: number): void {
    const ms = Math.round(tS * 1000);
    if (!(ms >= 0 && ms < MAX_PLAIN_ISO_MS) || ms / 1000 !== tS) {
      this.seconds = num(tS);
      this.iso = isoTime(tS);
      return;
    }
    const second = Math.floor(ms / 1000);
    const fraction = ms - second * 1000;
    if (second !== this.second) {
      this.second = second;
      this.secondText = String(second);
      this.secondIso = new Date(second * 1000).toISOString().slice(0, 19);
    }
    this.seconds = this.secondText + FRACTION_TEXT[fraction]!;
    this.iso = this.secondIso + ISO_MS_TEXT[fraction]!;
  }
}

function isoTime(tS: number): string {
  const ms = tS * 1000;
  return Number.isFinite(ms) && Math.abs(ms) < 8.64e15 ? new Date(ms).toISOString() : '';
}
