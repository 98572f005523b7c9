/**
 * The WebSocket adapter: pushes the engine's estimates and health changes to browser dashboards
 * and other clients, on a path of the HTTP adapter's server (the protocol is in ws-protocol.ts).
 *
 * Estimates are advisory and not a safety function: nothing that controls water systems or
 * vehicles may depend on this feed for safety.
 */
import type { IncomingMessage, Server } from 'node:http';
import type { Duplex } from 'node:stream';
import { WebSocketServer, type RawData, type WebSocket } from 'ws';
import type { EngineEventMap } from '../../engine/engine-events.js';
import type { EngineView } from '../../engine/engine-view.js';
import { parseClientRequest } from './client-request-parser.js';
import { ClientSubscription } from './client-subscription.js';
import {
  resolveEstimateStreamOptions, type EstimateStreamOptions, type ResolvedEstimateStreamOptions,
} from './estimate-stream-options.js';
import { StreamClient, type StreamClientStats, type StreamTotals } from './stream-client.js';
import { refuseUpgrade, UpgradeGate } from './upgrade-gate.js';
import {
  CLOSE_CODES, errorFrame, estimateFrame, healthFrame, helloFrame, measurementFrame, pongFrame, snapshotFrame,
  subscribedFrame, type SubscribeRequest,
} from './ws-protocol.js';

/** What the server needs from the rest of the daemon. */
export interface EstimateStreamDeps {
  /** The HTTP adapter's server; this adapter only handles its `upgrade` events for `path`. */
  readonly httpServer: Server;
  readonly view: EngineView;
}

/** Figures for metrics: totals are monotonic since construction. */
export interface EstimateStreamStats {
  /** Clients connected now. */
  readonly clients: number;
  /** Frames dropped unsent because a client's queue was full. */
  readonly dropped: number;
  /** Frames replaced by a newer estimate of the same track and kind before being sent. */
  readonly coalesced: number;
  readonly perClient: readonly StreamClientStats[];
}

/** The estimate stream on `options.path` of an existing HTTP server. */
export class EstimateStreamServer {
  private readonly options: ResolvedEstimateStreamOptions;
  private readonly gate: UpgradeGate;
  private readonly clients = new Set<StreamClient>();
  private readonly totals: StreamTotals = { dropped: 0, coalesced: 0 };
  private wss: WebSocketServer | null = null;
  private unsubscribe: (() => void)[] = [];
  private heartbeat: NodeJS.Timeout | null = null;
  private stopping: Promise<void> | null = null;
  private nextClientId = 1;

  /** Checks the options (throws EstimateStreamOptionsError naming a bad one); start() attaches. */
  constructor(private readonly deps: EstimateStreamDeps, options: EstimateStreamOptions = {}) {
    this.options = resolveEstimateStreamOptions(options);
    this.gate = new UpgradeGate(this.options);
  }

  /** Attaches to the HTTP server and the engine's events; a second call does nothing. */
  async start(): Promise<void> {
    if (this.stopping !== null) await this.stopping;
    if (this.wss !== null) return;
    this.wss = new WebSocketServer({
      noServer: true,
      maxPayload: this.options.maxPayloadBytes,
      perMessageDeflate: false,
      clientTracking: false,
    });
    this.deps.httpServer.on('upgrade', this.onUpgrade);
    const events = this.deps.view.events;
    this.unsubscribe = [
      events.on('estimate', this.onEstimate),
      events.on('health:changed', this.onHealth),
      events.on('measurement:accepted', this.onAccepted),
      events.on('measurement:rejected', this.onRejected),
    ];
    this.heartbeat = setInterval(this.onHeartbeat, this.options.heartbeatMs);
    this.heartbeat.unref();
  }

  /**
   * Detaches, then closes every client with 1001 and waits for them; clients that have not
   * answered within closeGraceMs are cut off. A second call returns the same promise.
   */
  stop(): Promise<void> {
    if (this.stopping !== null) return this.stopping;
    if (this.wss === null) return Promise.resolve();
    this.stopping = this.closeAll(this.wss).finally(() => {
      this.stopping = null;
    });
    return this.stopping;
  }

  /** Connected clients and the drop and coalesce totals, for metrics. */
  stats(): EstimateStreamStats {
    const perClient = [...this.clients].map((c) => c.stats());
    return { clients: this.clients.size, dropped: this.totals.dropped, coalesced: this.totals.coalesced, perClient };
  }

  private async closeAll(wss: WebSocketServer): Promise<void> {
    this.wss = null;
    this.deps.httpServer.off('upgrade', this.onUpgrade);
    for (const off of this.unsubscribe) off();
    this.unsubscribe = [];
    if (this.heartbeat !== null) clearInterval(this.heartbeat);
    this.heartbeat = null;
    const closed = [...this.clients].map((c) => c.closed);
    for (const client of this.clients) client.close(CLOSE_CODES.goingAway, 'server stopping');
    const grace = setTimeout(() => {
      for (const client of this.clients) client.terminate();
    }, this.options.closeGraceMs);
    await Promise.all(closed);
    clearTimeout(grace);
    await new Promise<void>((resolve) => wss.close(() => resolve()));
  }

  private readonly onUpgrade = (request: IncomingMessage, socket: Duplex, head: Buffer): void => {
    const wss = this.wss;
    if (wss === null) return;
    const verdict = this.gate.check(request);
    if (!verdict.ok) {
      // A peer that resets mid-refusal must not become an unhandled 'error'.
      socket.on('error', () => {});
      refuseUpgrade(socket, verdict.status, verdict.reason);
      return;
    }
    wss.handleUpgrade(request, socket, head, (ws) => this.onConnection(ws));
  };

  private onConnection(ws: WebSocket): void {
    if (this.wss === null) {
      ws.close(CLOSE_CODES.goingAway, 'server stopping');
      return;
    }
    const client = new StreamClient(this.nextClientId++, ws, {
      maxQueued: this.options.maxQueuedPerClient,
      sendHighWaterBytes: this.options.sendHighWaterBytes,
      maxMessagesPerSecond: this.options.maxMessagesPerSecondPerClient,
      nowMs: this.options.nowMs,
    }, this.totals);
    this.clients.add(client);
    // ws reports a protocol breach (such as an oversized frame) here and then closes by itself.
    ws.on('error', () => {});
    ws.on('pong', () => {
      client.alive = true;
    });
    ws.on('message', (data, isBinary) => this.onMessage(client, data, isBinary));
    void client.closed.then(() => this.clients.delete(client));
    client.sendInOrder(helloFrame());
  }

  private onMessage(client: StreamClient, data: RawData, isBinary: boolean): void {
    if (!client.open) return;
    if (!client.admitMessage()) {
      client.close(CLOSE_CODES.policyViolation, 'too many messages');
      return;
    }
    if (isBinary) {
      client.sendInOrder(errorFrame('binary frames are not supported: send JSON text frames'));
      return;
    }
    try {
      const verdict = parseClientRequest(rawText(data), {
        maxSubscriptions: this.options.maxSubscriptionsPerClient,
        estimatorNames: new Set(this.deps.view.estimatorNames()),
      });
      if (!verdict.ok) {
        client.sendInOrder(errorFrame(verdict.message, verdict.id));
        return;
      }
      const request = verdict.request;
      switch (request.op) {
        case 'ping':
          client.sendInOrder(pongFrame(request.id));
          return;
        case 'subscribe':
          this.subscribe(client, request);
          return;
        default: {
          const unreachable: never = request;
          throw new Error(`unhandled request ${JSON.stringify(unreachable)}`);
        }
      }
    } catch (error) {
      this.options.onError(error);
      client.sendInOrder(errorFrame('internal error while handling the request'));
    }
  }

  private subscribe(client: StreamClient, request: SubscribeRequest): void {
    const subscription = new ClientSubscription(request);
    const payloads: string[] = [];
    for (const latest of this.deps.view.latestEstimates()) {
      if (subscription.matchesEstimate(latest.estimator, latest.entity, latest.kind)) payloads.push(latest.payload);
    }
    client.resubscribe(subscription, subscribedFrame(request.id), snapshotFrame(payloads));
  }

  private readonly onEstimate = (event: EngineEventMap['estimate']): void => {
    // Built at most once per event, and only when some client wants it.
    let frame: string | undefined;
    let key: string | undefined;
    for (const client of this.clients) {
      const subscription = client.subscription;
      if (subscription === null || !subscription.matchesEstimate(event.estimator, event.entity, event.kind)) continue;
      frame ??= estimateFrame(event.payload);
      key ??= `${event.estimator}\u0000${event.entity}\u0000${event.kind}`;
      client.sendLatest(key, frame);
    }
  };

  private readonly onHealth = (change: EngineEventMap['health:changed']): void => {
    let frame: string | undefined;
    for (const client of this.clients) {
      if (client.subscription?.matchesHealth(change.estimator, change.entity) !== true) continue;
      frame ??= healthFrame(change);
      client.sendInOrder(frame);
    }
  };

  private readonly onAccepted = (e: EngineEventMap['measurement:accepted']): void => {
    this.pushMeasurement(e.estimator, e.entity, e.sensor, e.tS, e.values, e.nis, Number.isNaN(e.nis) ? 'initialized' : e.late ? 'late-applied' : 'applied');
  };

  private readonly onRejected = (e: EngineEventMap['measurement:rejected']): void => {
    if (e.entity === null || e.values === null) return;
    this.pushMeasurement(e.estimator, e.entity, e.sensor, e.tS, e.values, e.nis, e.reason);
  };

  private pushMeasurement(
    estimator: string, entity: string, sensor: string, t: number, values: Float64Array, nis: number, verdict: string,
  ): void {
    let frame: string | undefined;
    for (const client of this.clients) {
      if (client.subscription?.matchesMeasurement(estimator, entity) !== true) continue;
      frame ??= measurementFrame({
        estimator, entity, sensor, t, values: Array.from(values), nis: Number.isFinite(nis) ? nis : null, verdict,
      });
      client.sendLatest(`${estimator}\u0000${entity}\u0000m:${sensor}`, frame);
    }
  }

  private readonly onHeartbeat = (): void => {
    for (const client of this.clients) {
      if (!client.alive) {
        client.terminate();
        continue;
      }
      client.alive = false;
      client.ping();
    }
  };
}

function rawText(data: RawData): string {
  if (Buffer.isBuffer(data)) return data.toString('utf8');
  if (Array.isArray(data)) return Buffer.concat(data).toString('utf8');
  return Buffer.from(data).toString('utf8');
}
