/**
 * The daemon's HTTP server on node:http: Prometheus metrics, liveness and readiness, the JSON
 * API and the dashboard's static files. The WebSocket adapter attaches to `server`'s upgrade
 * event, so one port serves everything.
 *
 * Routes: GET /metrics, GET /healthz, GET /readyz, GET /api/v1/tracks,
 * GET /api/v1/tracks/:estimator/:entity, POST /api/v1/tracks/:estimator/:entity/reset
 * (bearer token), GET /api/v1/estimators, and GET / plus files of `staticDir`. HEAD works
 * wherever GET does. Estimates served here are advisory, not a safety function.
 */
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { Registry } from 'prom-client';
import type { EngineView } from '../../engine/engine-view.js';
import type { AdminHttpLogger } from './admin-http-logger.js';
import { createBearerCheck } from './bearer-auth.js';
import { HttpListenError } from './http-listen-error.js';
import { sendError, sendJson } from './http-responses.js';
import { READ_METHODS, type HttpRoute } from './http-route.js';
import { matchJsonApiRoute, type JsonApiDeps } from './json-api-routes.js';
import { declaredBodyTooLarge } from './request-body.js';
import { parseRequestPath } from './request-path.js';
import { singleFileRoute, staticFileRoute } from './static-files.js';

/** Readiness as the composition root reports it: each named check and the overall verdict. */
export interface Readiness {
  readonly ready: boolean;
  readonly checks: Readonly<Record<string, boolean>>;
}

/** Options of createAdminHttpServer. */
export interface AdminHttpServerOptions {
  /** Interface to bind, e.g. `127.0.0.1`. */
  readonly host: string;
  /** TCP port; 0 lets the kernel choose (tests). */
  readonly port: number;
  readonly view: EngineView;
  /** The registry /metrics exposes (the one the metrics adapter registered on). */
  readonly registry: Registry;
  /** Bearer token for writes; without it the reset route answers 403 RESET_DISABLED. */
  readonly token?: string;
  /** Called on each GET /readyz. */
  readonly readiness: () => Readiness;
  /** The dashboard's folder, served at `/`; without it only the API and metrics are served. */
  readonly staticDir?: string;
  /** Single files served at fixed URL paths (e.g. `/vendor/uplot.iife.min.js` → its file in node_modules). */
  readonly extraFiles?: Readonly<Record<string, string>>;
  readonly logger?: AdminHttpLogger;
  /** How long stop() lets in-flight requests finish before cutting connections, in ms (default 3000). */
  readonly closeDeadlineMs?: number;
}

/** The server and its lifecycle. */
export interface AdminHttpServer {
  /** The node:http server (attach WebSocket upgrades here). */
  readonly server: Server;
  /** Binds and resolves with the base URL; idempotent. Rejects with HttpListenError. */
  start(): Promise<{ url: string }>;
  /** Stops accepting, closes idle keep-alive connections, cuts the rest at the deadline; idempotent. */
  stop(): Promise<void>;
}

/** Creates the server; nothing listens until start(). */
export function createAdminHttpServer(options: AdminHttpServerOptions): AdminHttpServer {
  const { host, logger } = options;
  const apiDeps: JsonApiDeps = {
    view: options.view,
    checkToken: options.token === undefined ? null : createBearerCheck(options.token),
    ...(logger === undefined ? {} : { logger }),
  };
  const route = (segments: readonly string[]): HttpRoute | null => {
    if (segments[0] === 'api') return segments[1] === 'v1' ? matchJsonApiRoute(segments.slice(2), apiDeps) : null;
    if (segments.length === 1) {
      if (segments[0] === 'metrics') return read((res) => sendMetrics(res, options.registry));
      if (segments[0] === 'healthz') return read((res) => sendJson(res, 200, { status: 'alive' }));
      if (segments[0] === 'readyz') return read((res) => sendReadiness(res, options.readiness()));
    }
    const extra = options.extraFiles?.[`/${segments.join('/')}`];
    if (extra !== undefined) return singleFileRoute(extra);
    return options.staticDir === undefined ? null : staticFileRoute(options.staticDir, segments);
  };

  let closing = false;
  const server = createServer((req, res) => {
    if (closing) res.setHeader('Connection', 'close');
    // A response still in flight when stop() began leaves a keep-alive connection that
    // server.close() waits on; closing idle connections once it is done releases it at once.
    res.once('close', () => {
      if (closing) setImmediate(() => server.closeIdleConnections());
    });
    handle(req, res, route).catch((error: unknown) => {
      logger?.error({ err: errorText(error), method: req.method, path: pathOnly(req.url) }, 'HTTP request failed');
      if (!res.headersSent) sendError(res, 'INTERNAL');
      else res.destroy();
    });
  });

  let starting: Promise<{ url: string }> | null = null;
  let stopping: Promise<void> | null = null;

  const listen = () =>
    new Promise<{ url: string }>((resolveStart, rejectStart) => {
      const onError = (error: unknown) => rejectStart(new HttpListenError(host, options.port, error));
      server.once('error', onError);
      server.listen(options.port, host, () => {
        server.off('error', onError);
        const { port } = server.address() as AddressInfo;
        const url = `http://${host.includes(':') ? `[${host}]` : host}:${port}/`;
        logger?.info({ url }, 'HTTP server listening');
        resolveStart({ url });
      });
    });

  const close = () =>
    new Promise<void>((done) => {
      // Past the deadline, connections still busy (a slow client, a long scrape) are cut, so a
      // shutdown never hangs on someone else's socket.
      closing = true;
      const timer = setTimeout(() => server.closeAllConnections(), options.closeDeadlineMs ?? 3000);
      server.close(() => {
        clearTimeout(timer);
        closing = false;
        done();
      });
      server.closeIdleConnections();
    });

  return {
    server,
    async start() {
      if (stopping !== null) await stopping;
      starting ??= listen().catch((error: unknown) => {
        starting = null;
        throw error;
      });
      return starting;
    },
    stop() {
      if (stopping !== null) return stopping;
      if (starting === null) return Promise.resolve();
      const pending = starting;
      stopping = pending
        .then(close, () => undefined) // a start that failed left nothing to close
        .finally(() => {
          starting = null;
          stopping = null;
        });
      return stopping;
    },
  };
}

async function handle(
  req: IncomingMessage, res: ServerResponse, route: (segments: readonly string[]) => HttpRoute | null,
): Promise<void> {
  res.setHeader('X-Content-Type-Options', 'nosniff');
  if (declaredBodyTooLarge(req)) {
    // Closing the connection discards the unread body instead of reading it to keep-alive.
    sendError(res, 'PAYLOAD_TOO_LARGE', { Connection: 'close' });
    return;
  }
  const segments = parseRequestPath(req.url ?? '/');
  if (segments === null) {
    sendError(res, 'BAD_PATH');
    return;
  }
  const matched = route(segments);
  if (matched === null) {
    sendError(res, 'NOT_FOUND');
    return;
  }
  if (!matched.allow.includes(req.method ?? '')) {
    sendError(res, 'METHOD_NOT_ALLOWED', { Allow: matched.allow.join(', ') });
    return;
  }
  await matched.handle(req, res);
}

function read(answer: (res: ServerResponse) => void | Promise<void>): HttpRoute {
  return { allow: READ_METHODS, handle: (_req, res) => answer(res) };
}

async function sendMetrics(res: ServerResponse, registry: Registry): Promise<void> {
  const text = await registry.metrics();
  res.writeHead(200, {
    'Content-Type': registry.contentType,
    'Content-Length': Buffer.byteLength(text),
    'Cache-Control': 'no-store',
  });
  res.end(text);
}

function sendReadiness(res: ServerResponse, readiness: Readiness): void {
  const body = { status: readiness.ready ? 'ready' : 'not-ready', checks: readiness.checks };
  sendJson(res, readiness.ready ? 200 : 503, body);
}

/** The path without its query, which may hold anything a client chose to put there. */
function pathOnly(url: string | undefined): string {
  return (url ?? '').split('?')[0] ?? '';
}

function errorText(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}
