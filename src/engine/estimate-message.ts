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
 * does not build and then stringify an object tree.
 */
export class EstimateSerializer {
  private readonly stateKeys: string[];
  private readonly sigmaKeys: string[];
  private readonly head: string;

  /** Prepares the fragments for one estimator's state names. */
  constructor(readonly estimator: string, readonly stateNames: readonly string[], readonly includeCovariance: boolean) {
    this.stateKeys = stateNames.map((s, i) => `${i === 0 ? '' : ','}${JSON.stringify(s)}:`);
    this.sigmaKeys = this.stateKeys;
    this.head = `{"v":${ESTIMATE_PAYLOAD_VERSION},"estimator":${JSON.stringify(estimator)},"entity":`;
  }

  /** The payload for one estimate; x (P) and P (P×P) are read, never kept. */
  serialize(
    entity: string, kind: EstimateKind, tS: number, x: Float64Array, P: Float64Array,
    coastS: number, stale: boolean, health: HealthSummary,
  ): string {
    const n = this.stateNames.length;
    let s = `${this.head}${JSON.stringify(entity)},"kind":"${kind}","t":${num(tS)},"time":"${isoTime(tS)}","state":{`;
    for (let i = 0; i < n; i++) s += this.stateKeys[i]! + num(x[i]!);
    s += '},"sigma":{';
    for (let i = 0; i < n; i++) s += this.sigmaKeys[i]! + num(Math.sqrt(Math.max(0, P[i * n + i]!)));
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
    s += `,"coastS":${num(coastS)},"stale":${stale},"health":{"state":"${health.state}","reasons":[`;
    for (let i = 0; i < health.reasons.length; i++) s += `${i === 0 ? '' : ','}"${health.reasons[i]}"`;
    return `${s}]}}`;
  }
}

/** JSON has no NaN or Infinity: those become null so the payload always parses. */
function num(v: number): string {
  return Number.isFinite(v) ? String(v) : 'null';
}

function isoTime(tS: number): string {
  const ms = tS * 1000;
  return Number.isFinite(ms) && Math.abs(ms) < 8.64e15 ? new Date(ms).toISOString() : '';
}
