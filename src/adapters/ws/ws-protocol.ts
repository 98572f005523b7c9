/**
 * The estimate stream protocol (version 1): JSON text frames, one message per frame.
 *
 * Client → server:
 * - `{"op":"subscribe","id"?:ID,"estimators"?:[NAME,...],"entities"?:[PATTERN,...],
 *    "kinds"?:["filtered"|"predicted"|"smoothed",...],"health"?:BOOLEAN,"measurements"?:BOOLEAN}`
 *   replaces the client's one subscription. An absent list matches everything, an empty list
 *   nothing; `PATTERN` is an entity name where `*` matches any run of characters. `health: true`
 *   adds health changes of the matching tracks, `measurements: true` each measurement's outcome
 *   (for live plots). Estimator names must be configured ones; at most
 *   `maxSubscriptionsPerClient` estimator names and entity patterns together.
 * - `{"op":"ping","id"?:ID}` asks for a `pong`.
 * `ID` is a string (at most 128 characters) or a finite number, echoed in the reply. Unknown
 * fields are refused.
 *
 * Server → client:
 * - `{"type":"hello","version":1}` on connect. Nothing else is pushed until the client subscribes.
 * - `{"type":"subscribed","id"?:ID}` after each subscribe, followed at once by
 *   `{"type":"snapshot","estimates":[PAYLOAD,...]}`: the latest matching estimates.
 * - `{"type":"estimate","data":PAYLOAD}` per matching estimate (PAYLOAD is the estimate payload
 *   published on MQTT, see estimate-message.ts).
 * - `{"type":"health","data":HEALTH_CHANGE}` per matching health change when subscribed to health.
 * - `{"type":"measurement","data":{estimator,entity,sensor,t,values,nis,verdict}}` per
 *   measurement of a matching track when subscribed to measurements (verdict: applied,
 *   late-applied, initialized, or the rejection reason; coalesced per sensor for slow clients).
 * - `{"type":"pong","id"?:ID}` after a ping.
 * - `{"type":"error","message":TEXT,"id"?:ID}` for a request that was refused; the connection
 *   stays open and the previous subscription stays active.
 *
 * A client that reads slowly receives only the newest estimate per (estimator, entity, kind);
 * when even that exceeds its queue the oldest queued messages are dropped. Close codes: 1001 the
 * server is stopping, 1008 more than the allowed messages per second, 1009 a frame above the
 * size limit. Estimates are advisory and not a safety function.
 */
import type { HealthChange } from '../../engine/health-change.js';
import type { EstimateKind } from '../../engine/estimate-message.js';

/** Version announced in `hello`; bumped on any incompatible change to the protocol. */
export const WS_PROTOCOL_VERSION = 1;

/** The kinds a client may ask for. */
export const ESTIMATE_KINDS: readonly EstimateKind[] = ['filtered', 'predicted', 'smoothed'];

/** A request id echoed in replies. */
export type RequestId = string | number;

/** A validated subscribe request. */
export interface SubscribeRequest {
  readonly op: 'subscribe';
  readonly id?: RequestId;
  readonly estimators?: readonly string[];
  readonly entities?: readonly string[];
  readonly kinds?: readonly EstimateKind[];
  readonly health: boolean;
  /** Also push every measurement outcome of the matching tracks. */
  readonly measurements: boolean;
}

/** A validated ping request. */
export interface PingRequest {
  readonly op: 'ping';
  readonly id?: RequestId;
}

/** Any validated client request. */
export type ClientRequest = SubscribeRequest | PingRequest;

/** WebSocket close codes the server uses (RFC 6455 §7.4.1). */
export const CLOSE_CODES = {
  goingAway: 1001,
  policyViolation: 1008,
  messageTooBig: 1009,
} as const;

/** `{"type":"hello","version":1}`. */
export function helloFrame(): string {
  return `{"type":"hello","version":${WS_PROTOCOL_VERSION}}`;
}

/** `{"type":"subscribed","id"?:ID}`. */
export function subscribedFrame(id: RequestId | undefined): string {
  return `{"type":"subscribed"${idField(id)}}`;
}

/** `{"type":"pong","id"?:ID}`. */
export function pongFrame(id: RequestId | undefined): string {
  return `{"type":"pong"${idField(id)}}`;
}

/** `{"type":"error","message":TEXT,"id"?:ID}`. */
export function errorFrame(message: string, id?: RequestId): string {
  return `{"type":"error","message":${JSON.stringify(message)}${idField(id)}}`;
}

/** The payloads are spliced in as they are: they are JSON already, built by the engine. */
export function snapshotFrame(payloads: readonly string[]): string {
  return `{"type":"snapshot","estimates":[${payloads.join(',')}]}`;
}

/** Spliced without re-parsing, since this runs for every estimate and every client. */
export function estimateFrame(payload: string): string {
  return `{"type":"estimate","data":${payload}}`;
}

/** One measurement outcome, for live plots: what was measured, how it scored, what became of it. */
export interface MeasurementOutcome {
  readonly estimator: string;
  readonly entity: string;
  readonly sensor: string;
  readonly t: number;
  readonly values: readonly number[];
  /** NIS of the update (or of the refused attempt for a gate rejection); null where none. */
  readonly nis: number | null;
  /** 'applied' | 'late-applied' | 'initialized' | a rejection reason. */
  readonly verdict: string;
}

/** `{"type":"measurement","data":MEASUREMENT_OUTCOME}`. */
export function measurementFrame(m: MeasurementOutcome): string {
  return `{"type":"measurement","data":${JSON.stringify(m)}}`;
}

/** `{"type":"health","data":HEALTH_CHANGE}`. */
export function healthFrame(change: HealthChange): string {
  return `{"type":"health","data":${JSON.stringify(change)}}`;
}

function idField(id: RequestId | undefined): string {
  return id === undefined ? '' : `,"id":${JSON.stringify(id)}`;
}
