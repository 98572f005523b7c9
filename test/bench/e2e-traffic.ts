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

/** Bounds of a flow-controlled publish. */
export interface FlowControl {
  /** Stop publishing at this performance.now() time (ms); default never. */
  readonly deadlineMs?: number;
  /** Publish callbacks pending at most (mqtt.js calls them once the packet is handed to the socket). */
  readonly maxOutstanding?: number;
  /** Messages published but not yet arrived at `arrivals`, at most `size` (closed loop). */
  readonly window?: { readonly arrivals: ArrivalCounter; readonly size: number };
}

/**
 * Publishes the fixes in order at QoS 0 within the bounds of `control`. Resolves with the count
 * sent: fewer than all when the deadline came first.
 */
export function publishFlowControlled(client: MqttClient, fixes: readonly OutgoingFix[], control: FlowControl = {}): Promise<number> {
  const deadlineMs = control.deadlineMs ?? Infinity;
  const maxOutstanding = control.maxOutstanding ?? MAX_OUTSTANDING;
  const window = control.window;
  return new Promise((resolve, reject) => {
    let next = 0;
    let end = fixes.length;
    let outstanding = 0;
    let pumping = false;
    const open = (): boolean => outstanding < maxOutstanding && (window === undefined || next - window.arrivals.count < window.size);
    const pump = (): void => {
      if (pumping) return;
      pumping = true;
      if (performance.now() > deadlineMs) end = Math.min(end, next);
      while (next < end && open()) {
        const fix = fixes[next++]!;
        outstanding += 1;
        client.publish(fix.topic, fix.payload, { qos: 0 }, onSent);
        if ((next & 255) === 0 && performance.now() > deadlineMs) end = next;
      }
      pumping = false;
      if (next === end && outstanding === 0) {
        clearInterval(watchdog);
        window?.arrivals.onArrival(null);
        resolve(end);
      }
    };
    const onSent = (err?: Error): void => {
      if (err !== undefined) {
        clearInterval(watchdog);
        reject(err);
        return;
      }
      outstanding -= 1;
      pump();
    };
    // Re-checks the deadline while the window is shut and nothing arrives.
    const watchdog = setInterval(pump, 50);
    window?.arrivals.onArrival(pump);
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
  /** Calls `listener` after every arrival (one listener at a time; null removes it). */
  onArrival(listener: (() => void) | null): void;
  /** Detaches from the client. */
  close(): void;
}

/** Starts counting `client`'s messages on topics beginning with `prefix`. */
export function countArrivals(client: MqttClient, prefix: string): ArrivalCounter {
  let count = 0;
  let lastMs = performance.now();
  let listener: (() => void) | null = null;
  const onMessage = (topic: string): void => {
    if (!topic.startsWith(prefix)) return;
    count += 1;
    lastMs = performance.now();
    listener?.();
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
    onArrival: (l) => void (listener = l),
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
 * through the fleet, and records publish → arrival latency for those sent after the warm-up.
 * Each arrival on `outPrefix` is matched to its fix by (vehicle, t), the vehicle being the third
 * topic level of both the daemon's estimates and the relay's copies, and `t` a field of both
 * payloads (the estimate of a filtered update carries the measurement's time), so the relay and
 * the daemon are timed by the same code.
 */
export async function measureLatency(
  pub: MqttClient, sub: MqttClient, fleet: YardFleet, outPrefix: string,
  ratePerS: number, durationS: number, warmupS: number,
): Promise<LatencyRun> {
  const sentAt = new Map<string, number>();
  const samples: number[] = [];
  const measureFromMs = performance.now() + warmupS * 1000;
  const onEstimate = (topic: string, payload: Buffer): void => {
    const receivedMs = performance.now();
    if (!topic.startsWith(outPrefix)) return;
    const { t } = JSON.parse(payload.toString('utf8')) as { t: number };
    const key = `${topic.split('/')[2]}|${t}`;
    const at = sentAt.get(key);
    if (at === undefined) return;
    sentAt.delete(key);
    if (at >= measureFromMs) samples.push(receivedMs - at);
  };
  sub.on('message', onEstimate);

  const lastT = new Float64Array(fleet.vehicles.length);
  let measured = 0;
  const paced = await publishPaced(pub, ratePerS, Math.round(ratePerS * (warmupS + durationS)), (i) => {
    const index = i % fleet.vehicles.length;
    // Milliseconds suffice: a vehicle's fixes are fleet size ÷ ratePerS apart; the guard keeps
    // each vehicle's times increasing should a burst ever crowd them.
    const tText = Math.max(Date.now() / 1000, lastT[index]! + 0.001).toFixed(3);
    lastT[index] = Number(tText);
    const fix = fleet.fix(index, tText);
    const nowMs = performance.now();
    sentAt.set(`${fleet.vehicles[index]}|${Number(tText)}`, nowMs);
    if (nowMs >= measureFromMs) measured += 1;
    return fix;
  });
  const deadline = performance.now() + 3000;
  while (samples.length < measured && performance.now() < deadline) await new Promise((r) => setTimeout(r, 10));
  sub.off('message', onEstimate);
  return { samplesMs: Float64Array.from(samples), published: measured, lost: measured - samples.length, achievedRatePerS: paced };
}

/**
 * Publishes `total` messages made by `next(i)` at `ratePerS`, catching up in bursts when a timer
 * fires late (as a real gateway would), never with more than MAX_OUTSTANDING callbacks pending.
 * Resolves with the rate achieved.
 */
function publishPaced(pub: MqttClient, ratePerS: number, total: number, next: (i: number) => YardFix): Promise<number> {
  const startMs = performance.now();
  let sent = 0;
  let outstanding = 0;
  const onSent = (): void => void (outstanding -= 1);
  return new Promise((resolve) => {
    const tick = (): void => {
      const due = Math.min(total, Math.floor(((performance.now() - startMs) * ratePerS) / 1000));
      while (sent < due && outstanding < MAX_OUTSTANDING) {
        const fix = next(sent);
        outstanding += 1;
        pub.publish(fix.topic, fix.payload, { qos: 0 }, onSent);
        sent += 1;
      }
      if (sent < total) setTimeout(tick, 1);
      else resolve(sent / ((performance.now() - startMs) / 1000));
    };
    tick();
  });
}

/** The q-quantile of sorted samples (nearest rank). */
export function quantile(sorted: Float64Array, q: number): number {
  if (sorted.length === 0) return Number.NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil(q * sorted.length) - 1))]!;
}
