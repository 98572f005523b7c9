/**
 * The one catalogue of errors the admin HTTP API answers with. Every error body is
 * `{ "error": { "code": "NOT_FOUND", "message": "..." } }`; clients branch on `code`, which is
 * stable, never on `message`. Each key equals its code (a test checks it).
 *
 * | code | status | when |
 * | --- | --- | --- |
 * | NOT_FOUND | 404 | no route or file at that path |
 * | TRACK_NOT_FOUND | 404 | the estimator has no track for that entity |
 * | BAD_PATH | 400 | the path is malformed (bad percent-encoding) or tries to leave the dashboard folder |
 * | UNAUTHORIZED | 401 | a write without `Authorization: Bearer <token>`, or with the wrong token |
 * | RESET_DISABLED | 403 | a reset while no `auth.token` is configured: writes are never open |
 * | METHOD_NOT_ALLOWED | 405 | the path exists but not for that method (see the `Allow` header) |
 * | PAYLOAD_TOO_LARGE | 413 | a request body above 16 KiB |
 * | INTERNAL | 500 | a fault in the daemon; details go to the log, never to the client |
 */

/** One catalogue entry. */
export interface HttpErrorSpec {
  readonly code: string;
  readonly status: number;
  readonly message: string;
}

/** Every HTTP API error, keyed by its code. */
export const HTTP_ERRORS = {
  NOT_FOUND: { code: 'NOT_FOUND', status: 404, message: 'nothing is served at this path' },
  TRACK_NOT_FOUND: { code: 'TRACK_NOT_FOUND', status: 404, message: 'the estimator has no track for this entity' },
  BAD_PATH: { code: 'BAD_PATH', status: 400, message: 'the path is malformed or leaves the served folder' },
  UNAUTHORIZED: { code: 'UNAUTHORIZED', status: 401, message: 'this request needs a valid bearer token' },
  RESET_DISABLED: {
    code: 'RESET_DISABLED',
    status: 403,
    message: 'track resets are disabled because no auth.token is configured',
  },
  METHOD_NOT_ALLOWED: { code: 'METHOD_NOT_ALLOWED', status: 405, message: 'this method is not allowed here (see Allow)' },
  PAYLOAD_TOO_LARGE: { code: 'PAYLOAD_TOO_LARGE', status: 413, message: 'request bodies are limited to 16 KiB' },
  INTERNAL: { code: 'INTERNAL', status: 500, message: 'internal error; the daemon log has the details' },
} as const satisfies Record<string, HttpErrorSpec>;

/** A code of HTTP_ERRORS. */
export type HttpErrorCode = keyof typeof HTTP_ERRORS;
