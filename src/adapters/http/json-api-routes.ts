/**
 * The JSON API under `/api/v1/`: tracks, one track's detail, the operator's reset, estimators.
 * Thin: each route reads the engine view and writes what it returns.
 *
 * An entity name may hold `/` (a topic pattern with several wildcards); clients then send it
 * percent-encoded as one segment (`dock%2Ftug-01`), which parseRequestPath decodes.
 */
import type { IncomingMessage, ServerResponse } from 'node:http';
import type { EngineView } from '../../engine/engine-view.js';
import type { AdminHttpLogger } from './admin-http-logger.js';
import { READ_METHODS, type HttpRoute } from './http-route.js';
import { sendError, sendJson } from './http-responses.js';
import { readRequestBody } from './request-body.js';

/** Carried in the list answers, since estimates may be read by people running water systems or vehicles. */
export const ADVISORY_NOTICE =
  'Estimates are advisory, not a safety function; defer to local codes and licensed practice.';

/** What the API routes need. */
export interface JsonApiDeps {
  readonly view: EngineView;
  /** Checks an Authorization header; null when no token is configured (writes are then refused). */
  readonly checkToken: ((authorization: string | undefined) => boolean) | null;
  readonly logger?: AdminHttpLogger;
}

/**
 * The route for the segments after `/api/v1/`, or null when there is none (the server answers
 * 404 NOT_FOUND).
 */
export function matchJsonApiRoute(segments: readonly string[], deps: JsonApiDeps): HttpRoute | null {
  const [resource, estimator, entity, action, ...rest] = segments;
  if (rest.length > 0) return null;
  if (resource === 'tracks') {
    if (estimator === undefined) {
      return read((res) => sendJson(res, 200, { notice: ADVISORY_NOTICE, tracks: deps.view.listTracks() }));
    }
    if (estimator === '' || entity === undefined || entity === '') return null;
    if (action === undefined) return read((res) => trackDetail(res, deps.view, estimator, entity));
    if (action === 'reset') return { allow: ['POST'], handle: (req, res) => resetTrack(req, res, deps, estimator, entity) };
    return null;
  }
  if (resource === 'estimators' && estimator === undefined) {
    return read((res) => {
      const estimators = deps.view.estimatorNames().map((name) => ({ name, tracks: deps.view.trackCount(name) }));
      sendJson(res, 200, { notice: ADVISORY_NOTICE, estimators });
    });
  }
  return null;
}

function read(answer: (res: ServerResponse) => void): HttpRoute {
  return { allow: READ_METHODS, handle: (_req, res) => answer(res) };
}

function trackDetail(res: ServerResponse, view: EngineView, estimator: string, entity: string): void {
  const detail = view.trackDetail(estimator, entity);
  if (detail === null) sendError(res, 'TRACK_NOT_FOUND');
  else sendJson(res, 200, detail);
}

async function resetTrack(
  req: IncomingMessage, res: ServerResponse, deps: JsonApiDeps, estimator: string, entity: string,
): Promise<void> {
  // Without a token there is no way to tell an operator from anyone else on the network, so
  // the write stays shut rather than open.
  if (deps.checkToken === null) {
    sendError(res, 'RESET_DISABLED');
    return;
  }
  if (!deps.checkToken(req.headers.authorization)) {
    sendError(res, 'UNAUTHORIZED', { 'WWW-Authenticate': 'Bearer' });
    return;
  }
  // The body carries nothing, but it is read (within the limit) so a chunked upload cannot
  // exceed 16 KiB and the connection stays usable for the next request.
  const body = await readRequestBody(req);
  if (body === null) {
    sendError(res, 'PAYLOAD_TOO_LARGE', { Connection: 'close' });
    return;
  }
  if (!deps.view.resetTrack(estimator, entity)) {
    sendError(res, 'TRACK_NOT_FOUND');
    return;
  }
  deps.logger?.info({ estimator, entity }, 'track reset by an operator');
  sendJson(res, 200, { reset: true, estimator, entity });
}
