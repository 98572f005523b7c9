/**
 * The soak's traffic on the main thread: writes each generator tick (pre-encoded QoS 1
 * packets) when it is due, holding ticks back while too many messages are unacknowledged or the
 * socket has megabytes unsent, and matches estimates that come back to the publish time of a
 * sample of the measurements for the publish→estimate latency.
 */
import type { MqttClient } from 'mqtt';
import { LatencyHistogram } from './latency-histogram.js';
import type { RawMqttPublisher } from './raw-mqtt-publisher.js';
import type { FeedBatch } from './scenario-feed-worker.js';

/** Unsent bytes on the publisher's socket above which ticks wait for it to drain. */
const MAX_UNSENT_BYTES = 4 * 1024 * 1024;
/** Most unacknowledged QoS 1 messages (well under the 65,535 packet ids and the broker's receive maximum). */
const MAX_IN_FLIGHT = 8192;
/** A sampled publish with no estimate after this long was refused by the filter (or lost). */
const MATCH_WINDOW_MS = 30_000;
const ESTIMATE_PREFIX = 'statecast/yard/';
const ESTIMATE_SUFFIX = '/estimate';

/** Running figures of the traffic. */
export interface TrafficCounts {
  /** Measurements the broker acknowledged. */
  readonly published: number;
  /** Measurements whose write failed. */
  readonly failed: number;
  /** Measurements due and not yet acknowledged (held by flow control, or in flight). */
  readonly queued: number;
  readonly estimatesReceived: number;
  /** Ticks released for publishing; those more than 100 ms after their due time; the worst (ms). */
  readonly ticksReleased: number;
  readonly lateTicks: number;
  readonly maxTickLateMs: number;
}

/** See the module comment. */
export class SoakTraffic {
  readonly latency = new LatencyHistogram();
  private readonly notDue: FeedBatch[] = [];
  private readonly ready: FeedBatch[] = [];
  private queued = 0;
  private failed = 0;
  private estimatesReceived = 0;
  private ticksReleased = 0;
  private lateTicks = 0;
  private maxTickLateMs = 0;
  private waitingForDrain = false;
  /** `entity|t_ms` of sampled measurements → publish time (performance.now ms) and how many share it. */
  private readonly pending = new Map<string, { ms: number; n: number }>();

  /** Publishes with `publisher`; estimates arrive on `subscriber` (subscribed by the caller). */
  constructor(private readonly publisher: RawMqttPublisher, subscriber: MqttClient) {
    subscriber.on('message', (topic, payload) => this.onEstimate(topic, payload));
    publisher.onAcknowledged(() => this.pump());
  }

  /** Holds a generator tick until it is due (see release). */
  enqueue(batch: FeedBatch): void {
    this.notDue.push(batch);
  }

  /** Writes every held tick due at or before `nowMs` that flow control allows (call every few ms). */
  release(nowMs: number): void {
    while (this.notDue.length > 0 && this.notDue[0]!.dueS * 1000 <= nowMs) {
      const batch = this.notDue.shift()!;
      const lateMs = nowMs - batch.dueS * 1000;
      this.ticksReleased += 1;
      this.maxTickLateMs = Math.max(this.maxTickLateMs, lateMs);
      if (lateMs > 100) this.lateTicks += 1;
      if (batch.count === 0) continue;
      this.ready.push(batch);
      this.queued += batch.count;
    }
    this.pump();
  }

  counts(): TrafficCounts {
    return {
      published: this.publisher.acknowledged, failed: this.failed, queued: this.queued - this.publisher.acknowledged - this.failed,
      estimatesReceived: this.estimatesReceived,
      ticksReleased: this.ticksReleased, lateTicks: this.lateTicks, maxTickLateMs: this.maxTickLateMs,
    };
  }

  /** Forgets sampled publishes older than the match window (call now and then). */
  sweep(): void {
    const cutoff = performance.now() - MATCH_WINDOW_MS;
    for (const [key, p] of this.pending) {
      if (p.ms >= cutoff) break; // insertion order is publish order
      this.pending.delete(key);
    }
  }

  private pump(): void {
    while (this.ready.length > 0) {
      const next = this.ready[0]!;
      if (this.publisher.inFlight > 0 && this.publisher.inFlight + next.count > MAX_IN_FLIGHT) return; // resumed by the next PUBACKs
      if (!this.publisher.hasRoom(MAX_UNSENT_BYTES)) {
        if (!this.waitingForDrain) {
          this.waitingForDrain = true;
          this.publisher.onceDrained(() => {
            this.waitingForDrain = false;
            this.pump();
          });
        }
        return;
      }
      const batch = this.ready.shift()!;
      const now = performance.now();
      for (const key of batch.keys) {
        const known = this.pending.get(key);
        if (known === undefined) this.pending.set(key, { ms: now, n: 1 });
        else known.n += 1;
      }
      this.publisher.writeWithIds(Buffer.from(batch.packets.buffer, batch.packets.byteOffset, batch.packets.byteLength), batch.idOffsets, (err) => {
        if (err) this.failed += batch.count;
      });
    }
  }

  /** `statecast/yard/<entity>/estimate` with `…,"t":<s>,…` → the sampled publish of that reading, if any. */
  private onEstimate(topic: string, payload: Buffer): void {
    const arrived = performance.now();
    if (!topic.startsWith(ESTIMATE_PREFIX) || !topic.endsWith(ESTIMATE_SUFFIX)) return;
    this.estimatesReceived += 1;
    const entity = topic.slice(ESTIMATE_PREFIX.length, topic.length - ESTIMATE_SUFFIX.length);
    const text = payload.toString('latin1');
    const at = text.indexOf(',"t":');
    const end = text.indexOf(',', at + 5);
    const key = `${entity}|${Math.round(Number(text.slice(at + 5, end)) * 1000)}`;
    const p = this.pending.get(key);
    if (p === undefined) return;
    this.latency.record(arrived - p.ms);
    p.n -= 1;
    if (p.n === 0) this.pending.delete(key);
  }
}
