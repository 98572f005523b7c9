/**
 * The test's side of the broker for daemon tests: a subscriber that collects the daemon's
 * estimates and lets a test await them with a deadline, a windowed QoS 1 publisher of readings,
 * and a comparison of a published estimate with the in-process reference.
 */
import type { MqttClient } from 'mqtt';
import { expect } from 'vitest';
import { within } from '../helpers/daemon-process.js';
import { connectRawClient, endRawClient } from '../helpers/mqtt-fixtures.js';
import type { ReferenceStep } from './tank-farm-fixture.js';

/** The estimate payload the daemon publishes (see src/engine/estimate-message.ts). */
export interface EstimatePayload {
  readonly v: number;
  readonly estimator: string;
  readonly entity: string;
  readonly kind: 'filtered' | 'predicted' | 'smoothed';
  readonly t: number;
  readonly time: string;
  readonly state: Readonly<Record<string, number>>;
  readonly sigma: Readonly<Record<string, number>>;
  readonly covariance?: readonly (readonly number[])[];
  readonly coastS: number;
  readonly stale: boolean;
  readonly health: { readonly state: string; readonly reasons: readonly string[] };
}

/** Collects every estimate published on a topic filter. */
export class EstimateFeed {
  readonly estimates: EstimatePayload[] = [];
  private readonly waiters = new Set<() => void>();

  private constructor(readonly client: MqttClient) {
    client.on('message', (_topic, payload) => {
      this.estimates.push(JSON.parse(payload.toString()) as EstimatePayload);
      for (const w of [...this.waiters]) w();
    });
  }

  /** Connects and subscribes (QoS 1) before resolving, so nothing published afterwards is missed. */
  static async open(url: string, protocolVersion: 4 | 5, filter: string): Promise<EstimateFeed> {
    const client = await connectRawClient(url, { protocolVersion });
    const feed = new EstimateFeed(client);
    await client.subscribeAsync(filter, { qos: 1 });
    return feed;
  }

  /** Estimates of one entity, in arrival order. */
  of(entity: string): EstimatePayload[] {
    return this.estimates.filter((e) => e.entity === entity);
  }

  /** Resolves once `count` estimates of `entity` have arrived (with all of them), within `timeoutMs`. */
  waitForCount(entity: string, count: number, timeoutMs = 20_000): Promise<EstimatePayload[]> {
    return this.waitUntil(() => {
      const got = this.of(entity);
      return got.length >= count ? got : undefined;
    }, timeoutMs, () => `${count} estimates of ${entity} (have ${this.of(entity).length})`);
  }

  /** Resolves with the first estimate (already arrived or to come) that `match` accepts. */
  waitFor(match: (e: EstimatePayload) => boolean, timeoutMs = 20_000, what = 'a matching estimate'): Promise<EstimatePayload> {
    return this.waitUntil(() => this.estimates.find(match), timeoutMs, () => what);
  }

  private waitUntil<T>(check: () => T | undefined, timeoutMs: number, what: () => string): Promise<T> {
    let waiter: (() => void) | undefined;
    const found = new Promise<T>((resolve) => {
      waiter = () => {
        const v = check();
        if (v !== undefined) resolve(v);
      };
      this.waiters.add(waiter);
      waiter();
    });
    return within(found, timeoutMs, what).finally(() => this.waiters.delete(waiter!));
  }

  close(): Promise<void> {
    return endRawClient(this.client);
  }
}

/** Publishes at QoS 1 in order, with at most `maxOutstanding` unacknowledged at once. */
export async function publishReadings(
  client: MqttClient, readings: readonly { topic: string; payload: string | Buffer }[], maxOutstanding = 100,
): Promise<void> {
  for (let start = 0; start < readings.length; start += maxOutstanding) {
    await Promise.all(readings.slice(start, start + maxOutstanding).map((r) => client.publishAsync(r.topic, r.payload, { qos: 1 })));
  }
}

/** Asserts that a published estimate equals the reference step: time exactly, state and σ to `tolerance`. */
export function expectEstimateEquals(actual: EstimatePayload, expected: ReferenceStep, tolerance = 1e-9): void {
  const where = `estimate of ${actual.entity} at t=${actual.t} (reading seq ${expected.reading.seq})`;
  expect(actual.t, where).toBe(expected.tS);
  expect(Object.keys(actual.state), where).toEqual(Object.keys(expected.state));
  for (const [name, value] of Object.entries(expected.state)) {
    expect(Math.abs(actual.state[name]! - value), `${where}: state ${name} ${actual.state[name]} vs ${value}`).toBeLessThanOrEqual(tolerance);
    expect(Math.abs(actual.sigma[name]! - expected.sigma[name]!), `${where}: sigma ${name}`).toBeLessThanOrEqual(tolerance);
  }
}
