/** Writing JSON bodies and catalogue errors; node:http drops the body itself for HEAD. */
import type { OutgoingHttpHeaders, ServerResponse } from 'node:http';
import { HTTP_ERRORS, type HttpErrorCode } from './http-errors.js';

/** Content type of every JSON answer. */
export const JSON_CONTENT_TYPE = 'application/json; charset=utf-8';

/**
 * Sends `body` as JSON with `status`. NaN and ±Infinity become null (JSON has neither), which is
 * what the API documents for "not known yet". API answers are live state, so never cached.
 */
export function sendJson(res: ServerResponse, status: number, body: unknown, headers: OutgoingHttpHeaders = {}): void {
  const text = JSON.stringify(body);
  res.writeHead(status, {
    'Content-Type': JSON_CONTENT_TYPE,
    'Content-Length': Buffer.byteLength(text),
    'Cache-Control': 'no-store',
    ...headers,
  });
  res.end(text);
}

/** Sends the catalogue error `code` as `{ error: { code, message } }`. */
export function sendError(res: ServerResponse, code: HttpErrorCode, headers: OutgoingHttpHeaders = {}): void {
  const spec = HTTP_ERRORS[code];
  sendJson(res, spec.status, { error: { code: spec.code, message: spec.message } }, headers);
}
