/**
 * A stand-in daemon for the dashboard tests that need what the real one cannot do on
 * demand (chosen measurement frames, an older daemon refusing them, a dropped connection, a
 * 10 Hz flood): the
 * dashboard's files through the real static handler, the vendored chart files, canned API
 * answers, and a WebSocket speaking protocol v1 with frames built by the daemon's own code.
 * Binds 127.0.0.1 on a port the kernel picks.
 */
import { createReadStream } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { fileURLToPath } from 'node:url';
import { WebSocketServer, type WebSocket } from 'ws';
import { staticFileRoute } from '../../src/adapters/http/static-files.js';
import { parseRequestPath } from '../../src/adapters/http/request-path.js';
import {
  errorFrame, estimateFrame, helloFrame, measurementFrame, snapshotFrame, subscribedFrame, type MeasurementOutcome,
} from '../../src/adapters/ws/ws-protocol.js';
import { DASHBOARD_VENDOR_ASSETS } from '../../src/dashboard/vendor-assets.js';
import { EstimateSerializer, type EstimateKind } from '../../src/engine/estimate-message.js';

const DASHBOARD_DIR = fileURLToPath(new URL('../../src/dashboard/', import.meta.url));

/** A sensor summary as the detail API gives it. */
export interface FakeSensor {
  readonly name: string;
  gate: number;
}

/** The stand-in and the knobs the tests turn. */
export interface FakeStreamServer {
  readonly url: string;
  /** Whether a subscribe asking for measurement frames is accepted (else refused, as a daemon from before them does). */
  acceptMeasurements: boolean;
  /** Every client request received, parsed, in order. */
  readonly requests: Record<string, unknown>[];
  /** How many WebSocket connections were opened so far. */
  connections(): number;
  /** Sends an estimate of `entity` (estimator `estimator`) to every subscribed client. */
  sendEstimate(estimator: string, entity: string, kind: EstimateKind, tS: number, x: readonly number[], sigma: readonly number[]): void;
  /** Sends a measurement frame to every subscribed client. */
  sendMeasurement(m: MeasurementOutcome): void;
  /** Cuts every WebSocket connection (no close handshake). */
  dropClients(): void;
  /** Detail API answers: sensors per `estimator/entity`. */
  readonly sensors: Map<string, FakeSensor[]>;
  stop(): Promise<void>;
}

/** State names per estimator for the serialized payloads. */
const STATES: Record<string, string[]> = { tanks: ['level', 'level_rate', 'pressure_bias'], yard: ['east', 'north', 'v_east', 'v_north'] };

/** Starts the stand-in. */
export async function startFakeStreamServer(): Promise<FakeStreamServer> {
  const serializers = new Map(Object.entries(STATES).map(([name, states]) => [name, new EstimateSerializer(name, states, false)]));
  const subscribed = new Set<WebSocket>();
  const requests: Record<string, unknown>[] = [];
  const sensors = new Map<string, FakeSensor[]>();
  const tracks = new Map<string, { estimator: string; entity: string; tS: number }>();
  let connections = 0;

  const http: Server = createServer((req, res) => {
    const path = (req.url ?? '/').split('?')[0]!;
    const vendored = DASHBOARD_VENDOR_ASSETS[path];
    if (vendored !== undefined) {
      res.writeHead(200, { 'Content-Type': path.endsWith('.css') ? 'text/css' : 'text/javascript' });
      createReadStream(vendored).pipe(res);
      return;
    }
    if (path.startsWith('/api/v1/tracks')) {
      answerApi(path, res);
      return;
    }
    void staticFileRoute(DASHBOARD_DIR, parseRequestPath(req.url ?? '/') ?? ['']).handle(req, res);
  });

  const answerApi = (path: string, res: import('node:http').ServerResponse) => {
    const [estimator, entity] = path.split('/').slice(4).map(decodeURIComponent);
    const health = { state: 'ok', reasons: [] };
    let body: unknown;
    if (estimator === undefined) {
      body = { tracks: [...tracks.values()].map((t) => ({ ...t, stale: false, health })) };
    } else {
      const t = tracks.get(`${estimator}/${entity}`);
      body = t === undefined ? null : {
        ...t, stale: false, health,
        sensors: (sensors.get(`${estimator}/${entity}`) ?? []).map((s) => ({
          name: s.name, accepted: 100, late: 0, rejected: { gate: s.gate }, lastNis: 1, windowedNisMean: 1.1,
          windowFill: 10, nisBand: [0.32, 2.05], gateRejectionRate: 0, innovationRatio: [0.2], lastTimeS: t.tS, health: 'ok',
        })),
      };
    }
    res.writeHead(body === null ? 404 : 200, { 'Content-Type': 'application/json' });
    res.end(JSON.stringify(body ?? { error: 'TRACK_NOT_FOUND' }));
  };

  const wss = new WebSocketServer({ server: http, path: '/ws' });
  wss.on('connection', (socket) => {
    connections += 1;
    socket.send(helloFrame());
    socket.on('close', () => subscribed.delete(socket));
    socket.on('message', (data) => {
      const request = JSON.parse(String(data)) as Record<string, unknown>;
      requests.push(request);
      if (request['op'] !== 'subscribe') return;
      const id = request['id'] as string | undefined;
      if (request['measurements'] !== undefined && !server.acceptMeasurements) {
        socket.send(errorFrame('measurements: unknown field', id));
        return;
      }
      subscribed.add(socket);
      socket.send(subscribedFrame(id));
      socket.send(snapshotFrame([]));
    });
  });

  await new Promise<void>((resolve) => http.listen(0, '127.0.0.1', resolve));
  const { port } = http.address() as AddressInfo;
  const broadcast = (text: string) => {
    for (const s of subscribed) s.send(text);
  };

  const server: FakeStreamServer = {
    url: `http://127.0.0.1:${port}/`,
    acceptMeasurements: true,
    requests,
    sensors,
    connections: () => connections,
    sendEstimate(estimator, entity, kind, tS, x, sigma) {
      tracks.set(`${estimator}/${entity}`, { estimator, entity, tS });
      const n = x.length;
      const P = new Float64Array(n * n);
      for (let i = 0; i < n; i++) P[i * n + i] = sigma[i]! ** 2;
      const payload = serializers.get(estimator)!.serialize(entity, kind, tS, Float64Array.from(x), P, 0, false, { state: 'ok', reasons: [] });
      broadcast(estimateFrame(payload));
    },
    sendMeasurement: (m) => broadcast(measurementFrame(m)),
    dropClients() {
      for (const client of wss.clients) client.terminate();
    },
    async stop() {
      for (const client of wss.clients) client.terminate();
      await new Promise<void>((resolve) => wss.close(() => resolve()));
      http.closeAllConnections();
      await new Promise<void>((resolve) => http.close(() => resolve()));
    },
  };
  return server;
}
