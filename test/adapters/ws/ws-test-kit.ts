/** Shared pieces of the WebSocket adapter tests: a fake engine view, an HTTP server, clients. */
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { WebSocket, type ClientOptions } from 'ws';
import { EngineEvents } from '../../../src/engine/engine-events.js';
import type { EngineView, LatestEstimate } from '../../../src/engine/engine-view.js';
import { EstimateSerializer, type EstimateKind } from '../../../src/engine/estimate-message.js';

const tankSerializer = new EstimateSerializer('tanks', ['level', 'rate'], false);
const yardSerializer = new EstimateSerializer('yard', ['e', 'n', 've', 'vn'], false);

/** A real estimate payload for a demo entity (tank-* belong to `tanks`, tug-* to `yard`). */
export function payloadFor(entity: string, kind: EstimateKind, tS: number): LatestEstimate {
  const isTank = entity.startsWith('tank-');
  const serializer = isTank ? tankSerializer : yardSerializer;
  const n = serializer.stateNames.length;
  const x = Float64Array.from({ length: n }, (_, i) => tS / 1000 + i);
  const P = new Float64Array(n * n);
  for (let i = 0; i < n; i++) P[i * n + i] = 0.25;
  const payload = serializer.serialize(entity, kind, tS, x, P, 0, false, { state: 'ok', reasons: [] });
  return { estimator: serializer.estimator, entity, kind, payload };
}

/** An EngineView with real events and a settable table of latest estimates. */
export class FakeEngineView implements EngineView {
  readonly events = new EngineEvents();
  latest: LatestEstimate[] = [];

  estimatorNames(): readonly string[] {
    return ['tanks', 'yard'];
  }
  listTracks(): never[] {
    return [];
  }
  trackDetail(): null {
    return null;
  }
  resetTrack(): boolean {
    return false;
  }
  /** How often latestEstimates() has been read: one read per subscribe handled. */
  latestReads = 0;
  private readsWaiter: { count: number; resolve: () => void } | null = null;

  latestEstimates(): Iterable<LatestEstimate> {
    this.latestReads++;
    if (this.readsWaiter !== null && this.latestReads >= this.readsWaiter.count) {
      this.readsWaiter.resolve();
      this.readsWaiter = null;
    }
    return this.latest;
  }

  /** Resolves once latestEstimates() has been read `count` times in all. */
  readsReached(count: number): Promise<void> {
    if (this.latestReads >= count) return Promise.resolve();
    return new Promise((resolve) => {
      this.readsWaiter = { count, resolve };
    });
  }
  trackCount(): number {
    return this.latest.length;
  }
  counters(): { received: number; accepted: number; estimatesProduced: number } {
    return { received: 0, accepted: 0, estimatesProduced: 0 };
  }

  /** Emits an estimate as the engine would. */
  emitEstimate(estimate: LatestEstimate, tS = 0): void {
    this.events.emit('estimate', { ...estimate, topic: `est/${estimate.estimator}/${estimate.entity}`, tS });
  }
}

/** A plain HTTP server on a random loopback port. */
export async function startHttpServer(): Promise<{ server: Server; port: number; close: () => Promise<void> }> {
  const server = createServer((_req, res) => res.end('ok'));
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as AddressInfo).port;
  const close = (): Promise<void> => new Promise((resolve) => {
    server.closeAllConnections();
    server.close(() => resolve());
  });
  return { server, port, close };
}

/** A parsed server message. */
export type Message = Record<string, unknown> & { type: string };

/** A connected client that collects what it receives, so a test can await the next message. */
export class TestClient {
  private readonly received: Message[] = [];
  private waiter: ((m: Message) => void) | null = null;
  /** Resolves with the close code. */
  readonly closed: Promise<number>;

  private constructor(readonly ws: WebSocket) {
    ws.on('message', (data) => {
      const message = JSON.parse(String(data)) as Message;
      const waiter = this.waiter;
      if (waiter === null) this.received.push(message);
      else {
        this.waiter = null;
        waiter(message);
      }
    });
    this.closed = new Promise((resolve) => ws.on('close', (code) => resolve(code)));
  }

  /** Opens a connection and waits until it is open. */
  static async open(url: string, options: ClientOptions = {}): Promise<TestClient> {
    const ws = new WebSocket(url, options);
    const client = new TestClient(ws);
    await new Promise<void>((resolve, reject) => {
      ws.once('open', () => resolve());
      ws.once('error', reject);
    });
    return client;
  }

  /** The next message not yet taken. */
  next(): Promise<Message> {
    const message = this.received.shift();
    if (message !== undefined) return Promise.resolve(message);
    return new Promise((resolve) => {
      this.waiter = resolve;
    });
  }

  /** Sends a request object as JSON. */
  send(request: unknown): void {
    this.ws.send(JSON.stringify(request));
  }

  /** Round-trips a ping, so every message sent before it has been answered. */
  async sync(): Promise<Message[]> {
    this.send({ op: 'ping', id: 'sync' });
    const before: Message[] = [];
    for (let m = await this.next(); !(m.type === 'pong' && m['id'] === 'sync'); m = await this.next()) before.push(m);
    return before;
  }

  close(): Promise<number> {
    this.ws.close();
    return this.closed;
  }
}

/** The HTTP status an upgrade is refused with (fails the test when the upgrade succeeds). */
export function refusedStatus(url: string, options: ClientOptions = {}): Promise<number> {
  return new Promise((resolve, reject) => {
    const ws = new WebSocket(url, options);
    ws.on('unexpected-response', (req, res) => {
      resolve(res.statusCode ?? 0);
      req.destroy();
    });
    ws.on('error', () => {});
    ws.on('open', () => {
      ws.terminate();
      reject(new Error('the upgrade was accepted'));
    });
  });
}
