/**
 * A field gateway for broker-crash tests: it publishes numbered readings at QoS 1 at a steady
 * rate and counts a reading as delivered only when the daemon's estimate for it has been seen
 * (`confirm`), not when the broker acknowledged it: a broker killed with SIGKILL writes no
 * database, so readings it had acknowledged but not yet passed on die with it. When the
 * connection drops the gateway reconnects, waits until the daemon has announced itself online
 * again (so the daemon's subscription exists on the restarted broker), re-sends every
 * unconfirmed reading in order and carries on. The daemon sees a re-sent reading it already had
 * as a duplicate.
 */
import mqtt, { type MqttClient } from 'mqtt';
import { within } from '../helpers/daemon-process.js';
import type { TankReading } from './tank-farm-fixture.js';

const RETRY_MS = 100;
const DEADLINE_MS = 30_000;

/** How `publish` paces itself. */
export interface GatewayPace {
  /** Readings sent back to back before a pause. */
  readonly perTick: number;
  readonly tickMs: number;
  /** Most readings sent and not yet confirmed; the gateway waits while there are more. */
  readonly window: number;
  /** Called after each first send of a reading. */
  readonly onSent?: (seq: number) => void;
}

/** See the module comment. */
export class SequenceGateway {
  /** Readings sent again after a reconnect (some may have reached the daemon already). */
  resent = 0;
  /** Connections made, the first included. */
  connections = 0;
  private client: MqttClient | null = null;
  private readonly unconfirmed = new Map<number, TankReading>();
  private online: Promise<void> = Promise.resolve();
  private daemonSince: string | null = null;
  private stopped = false;
  private readonly waiters = new Set<() => void>();

  constructor(
    private readonly url: string,
    private readonly protocolVersion: 4 | 5,
    private readonly statusTopic: string,
  ) {}

  /** Connects and learns the daemon's current online status. */
  async start(): Promise<void> {
    this.online = this.connect();
    await this.online;
  }

  /** The daemon has published the estimate of reading `seq`. */
  confirm(seq: number): void {
    if (!this.unconfirmed.delete(seq)) return;
    for (const w of [...this.waiters]) w();
  }

  /** Sends the readings in order at the given pace and resolves once every one is confirmed. */
  async publish(readings: readonly TankReading[], pace: GatewayPace): Promise<void> {
    for (let i = 0; i < readings.length; i++) {
      await this.online;
      await this.until(() => this.unconfirmed.size < pace.window, `fewer than ${pace.window} unconfirmed readings`);
      const reading = readings[i]!;
      this.unconfirmed.set(reading.seq, reading);
      this.send(reading);
      pace.onSent?.(reading.seq);
      if (i % pace.perTick === pace.perTick - 1) await new Promise((resolve) => setTimeout(resolve, pace.tickMs));
    }
    await this.until(() => this.unconfirmed.size === 0, 'every reading to be confirmed');
  }

  async stop(): Promise<void> {
    this.stopped = true;
    const c = this.client;
    this.client = null;
    if (c !== null) await new Promise<void>((resolve) => c.end(true, () => resolve()));
  }

  private until(condition: () => boolean, what: string): Promise<void> {
    let waiter: (() => void) | undefined;
    const met = new Promise<void>((resolve) => {
      waiter = () => {
        if (condition()) resolve();
      };
      this.waiters.add(waiter);
      waiter();
    });
    return within(met, DEADLINE_MS, () => `${what} (${this.unconfirmed.size} unconfirmed, lowest seq ${Math.min(...this.unconfirmed.keys())})`)
      .finally(() => this.waiters.delete(waiter!));
  }

  private send(reading: TankReading): void {
    const c = this.client;
    // Not connected: the reading stays unconfirmed and goes out again after the reconnect.
    if (c !== null && c.connected) c.publish(reading.topic, reading.payload, { qos: 1 });
  }

  /** Connects (retrying until the deadline), then waits for a daemon online status newer than the last one seen. */
  private async connect(): Promise<void> {
    const deadline = Date.now() + DEADLINE_MS;
    for (;;) {
      if (this.stopped) return;
      const c = mqtt.connect(this.url, { protocolVersion: this.protocolVersion, reconnectPeriod: 0, connectTimeout: 2000, clean: true });
      const ok = await new Promise<boolean>((resolve) => {
        c.once('connect', () => resolve(true));
        c.once('error', () => resolve(false));
        c.once('close', () => resolve(false));
      });
      if (ok) {
        await this.awaitDaemonOnline(c, deadline);
        this.client = c;
        this.connections += 1;
        c.once('close', () => {
          if (this.client !== c || this.stopped) return;
          this.client = null;
          this.online = this.connect();
        });
        const pending = [...this.unconfirmed.values()].sort((a, b) => a.seq - b.seq);
        if (this.connections > 1) this.resent += pending.length;
        for (const reading of pending) this.send(reading);
        return;
      }
      c.end(true);
      if (Date.now() > deadline) throw new Error(`could not reach the broker at ${this.url} for ${DEADLINE_MS} ms`);
      await new Promise((resolve) => setTimeout(resolve, RETRY_MS));
    }
  }

  private async awaitDaemonOnline(c: MqttClient, deadline: number): Promise<void> {
    const seen = new Promise<void>((resolve) => {
      c.on('message', (topic, payload) => {
        if (topic !== this.statusTopic) return;
        const status = JSON.parse(payload.toString()) as { status: string; since?: string };
        if (status.status !== 'online' || status.since === undefined || status.since === this.daemonSince) return;
        this.daemonSince = status.since;
        resolve();
      });
    });
    await c.subscribeAsync(this.statusTopic, { qos: 1 });
    await within(seen, Math.max(1, deadline - Date.now()), () => `a new online status of the daemon on ${this.statusTopic}`);
  }
}
