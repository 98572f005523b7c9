/**
 * The e2e bench's side of the broker: a flow-controlled bulk publisher, a counter of arrivals,
 * and a rate-paced publisher that measures publish → estimate latency.
 */
import { performance } from 'node:perf_hooks';
import type { MqttClient } from 'mqtt';
import type { YardFix, YardFleet } from './e2e-yard-fleet.js';

/** mqtt.js warns past ~1000 outstanding QoS 0 callbacks on a full socket; 500 was fine here. */
export const MAX_OUTSTANDING = 500;

/** A fix as bytes, converted once before the timed part. */
export interface OutgoingFix {
  readonly topic: string;
  readonly payload: Buffer;
}

/** Converts fixes to bytes ahead of a run. */
export function toOutgoing(fixes: readonly YardFix[]): OutgoingFix[] {
  return fixes.map((f) => ({ topic: f.topic, payload: Buffer.from(f.payload) }));
}

/**
 * Publishes the fixes in order at QoS 0, keeping at most `maxOutstanding` publish callbacks
 * pending (mqtt.js calls them once the packet is handed to the socket, later when the socket is
 * full), and stops early at `deadlineMs` (performance.now() time). Resolves with the count sent.
 */
export function publishFlowControlled(
  client: MqttClient, fixes: readonly OutgoingFix[], deadlineMs = Infinity, maxOutstanding = MAX_OUTSTANDING,
): Promise<number> {
  return new Promise((resolve, reject) => {
    let next = 0;
    let end = fixes.length;
    let outstanding = 0;
    let pumping = false;
    const pump = (): void => {
      pumping = true;
      while (outstanding < maxOutstanding && next < end) {
        if ((next & 255) === 0 && performance.now() > deadlineMs) end = next;
        else {
          const fix = fixes[next++]!;
          outstanding += 1;
          client.publish(fix.topic, fix.payload, { qos: 0 }, onSent);
        }
      }
      pumping = false;
      if (next === end && outstanding === 0) resolve(end);
    };
    const onSent = (err?: Error): void => {
      if (err !== undefined) return reject(err);
      outstanding -= 1;
      if (!pumping) pump();
    };
    pump();
  });
}

/** Counts messages whose topic starts with a prefix. */
export interface ArrivalCounter {
  readonly count: number;
  /** performance.now() of the latest arrival (ms). */
  readonly lastMs: number;
  /**
   * Resolves once `total` messages have arrived in all, none arrived for `idleMs`, or at
   * `deadlineMs` (performance.now() time).
   */
  waitFor(total: number, idleMs: number, deadlineMs?: number): Promise<void>;
  /** Detaches from the client. */
  close(): void;
}

/** Starts counting `client`'s messages on topics beginning with `prefix`. */
export function countArrivals(client: MqttClient, prefix: string): ArrivalCounter {
  let count = 0;
  let lastMs = performance.now();
  const onMessage = (topic: string): void => {
    if (!topic.startsWith(prefix)) return;
    count += 1;
    lastMs = performance.now();
  };
  client.on('message', onMessage);
  return {
    get count() { return count; },
    get lastMs() { return lastMs; },
    waitFor(total, idleMs, deadlineMs = Infinity) {
      return new Promise((resolve) => {
        const poll = setInterval(() => {
          const now = performance.now();
          if (count >= total || now - lastMs > idleMs || now > deadlineMs) {
            clearInterval(poll);
            resolve();
          }
        }, 5);
      });
    },
    close: () => void client.off('message', onMessage),
  };
}

/** Latency samples (ms) and what was lost. */
export interface LatencyRun {
  readonly samplesMs: Float64Array;
  readonly published: number;
  readonly lost: number;
  readonly achievedRatePerS: number;
}

/**
 * Publishes live fixes (t = the wall clock) at `ratePerS` for `warmupS + durationS`, cycling
 * through the fleet, and records publish → estimate latency for those sent after the warm-up.
 * Each estimate is matched to its fix by (vehicle, t): the estimate of a filtered update carries
 * the measurement's time. The publisher catches up in bursts when a timer fires late, as a real
 * gateway would, but never holds more than MAX_OUTSTANDING callbacks.
 */
export async function measureLatency(
  pub: MqttClient, sub: MqttClient, fleet: YardFleet, estimatePrefix: string,
  ratePerS: number, durationS: number, warmupS: number,
): Promise<LatencyRun> {
  const sentAt = new Map<string, number>();
  const samples: number[] = [];
  let measureFromMs = Infinity;
  const onEstimate = (topic: string, payload: Buffer): void => {
    const receivedMs = performance.now();
    if (!topic.startsWith(estimatePrefix)) return;
    const { entity, t } = JSON.parse(payload.toString('utf8')) as { entity: string; t: number };
    const key = `${entity}|${t}`;
    const at = sentAt.get(key);
    if (at === undefined) return;
    sentAt.delete(key);
    if (at >= measureFromMs) samples.push(receivedMs - at);
  };
  sub.on('message', onEstimate);

  const total = Math.round(ratePerS * (warmupS + durationS));
  const lastT = new Float64Array(fleet.vehicles.length);
  const startMs = performance.now();
  measureFromMs = startMs + warmupS * 1000;
  let sent = 0;
  let measured = 0;
  let outstanding = 0;
  const onSent = (): void => void (outstanding -= 1);
  await new Promise<void>((resolve) => {
    const tick = (): void => {
      const due = Math.min(total, Math.floor(((performance.now() - startMs) * ratePerS) / 1000));
      while (sent < due && outstanding < MAX_OUTSTANDING) {
        const index = sent % fleet.vehicles.length;
        // Milliseconds suffice: a vehicle's fixes are 1000 / ratePerS × fleet size apart; the
        // guard keeps each vehicle's times increasing should a burst ever crowd them.
        const tS = Math.max(Date.now() / 1000, lastT[index]! + 0.001);
        const tText = tS.toFixed(3);
        lastT[index] = Number(tText);
        const fix = fleet.fix(index, tText);
        const now = performance.now();
        sentAt.set(`${fleet.vehicles[index]}|${Number(tText)}`, now);
        if (now >= measureFromMs) measured += 1;
        outstanding += 1;
        pub.publish(fix.topic, fix.payload, { qos: 0 }, onSent);
        sent += 1;
      }
      if (sent < total) setTimeout(tick, 1);
      else resolve();
    };
    tick();
  });
  const elapsedS = (performance.now() - startMs) / 1000;
  const deadline = performance.now() + 3000;
  while (samples.length < measured && performance.now() < deadline) await new Promise((r) => setTimeout(r, 10));
  sub.off('message', onEstimate);
  return { samplesMs: Float64Array.from(samples), published: measured, lost: measured - samples.length, achievedRatePerS: sent / elapsedS };
}

/** The q-quantile of sorted samples (nearest rank). */
export function quantile(sorted: Float64Array, q: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))]!;
}
