/**
 * The newest estimate of one kind for one track: its numbers, copied when it is made, and its
 * payload text, built on first read. An offline replay has no publisher and reads no payloads,
 * so it never pays for the text (serialization was half of the engine's time per message);
 * the daemon reads it once for MQTT, and WebSocket pushes and snapshots reuse that string.
 *
 * The engine hands this object itself to 'estimate' listeners (it has every field of the
 * event), so making an estimate allocates nothing; it is overwritten by the track's next
 * estimate of the same kind, so listeners read it during the call.
 */
import type { EstimateKind, EstimateSerializer } from './estimate-message.js';
import type { HealthSummary } from './health-change.js';

/** See the module comment. */
export class EstimateSnapshot {
  /** x̂ and P (row-major) of the estimate. */
  readonly x: Float64Array;
  readonly P: Float64Array;
  /** Event time of the estimate (epoch s). */
  tS = Number.NaN;
  private coastS = Number.NaN;
  private stale = true;
  private health: HealthSummary = { state: 'ok', reasons: [] };
  private text: string | null = null;
  private readonly entityJson: string;

  /** Empty storage for an n-state estimator's estimates of one kind for one entity. */
  constructor(
    private readonly serializer: EstimateSerializer,
    readonly estimator: string,
    readonly entity: string,
    readonly kind: EstimateKind,
    readonly topic: string,
    n: number,
  ) {
    this.x = new Float64Array(n);
    this.P = new Float64Array(n * n);
    this.entityJson = JSON.stringify(entity);
  }

  /** Records a new estimate (x, P are copied) and forgets the previous text. */
  capture(tS: number, x: Float64Array, P: Float64Array, coastS: number, stale: boolean, health: HealthSummary): void {
    this.tS = tS;
    this.x.set(x);
    this.P.set(P);
    this.coastS = coastS;
    this.stale = stale;
    this.health = health;
    this.text = null;
  }

  /** The estimate payload (see EstimateSerializer), built once per estimate. */
  get payload(): string {
    this.text ??= this.serializer.serializeEntityJson(this.entityJson, this.kind, this.tS, this.x, this.P, this.coastS, this.stale, this.health);
    return this.text;
  }
}
