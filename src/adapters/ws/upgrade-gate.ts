/**
 * Decides, before the WebSocket handshake, whether an HTTP upgrade may proceed: right path,
 * allowed origin, valid bearer token. Refusals are written as plain HTTP responses.
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import type { Duplex } from 'node:stream';

/** Settings of the gate. */
export interface UpgradeGateSettings {
  /** The only path upgraded, e.g. `/ws`. */
  readonly path: string;
  /** Required bearer token; absent: no authentication. */
  readonly token?: string;
  /** Exact Origin values allowed; empty: any origin. */
  readonly allowedOrigins: readonly string[];
}

/** The verdict on one upgrade request. */
export type UpgradeVerdict =
  | { readonly ok: true }
  | { readonly ok: false; readonly status: 401 | 403 | 404; readonly reason: string };

const BEARER = /^Bearer +(\S+) *$/i;

/** Checks upgrade requests against the path, the origin list and the token. */
export class UpgradeGate {
  private readonly origins: ReadonlySet<string>;
  private readonly tokenDigest: Buffer | null;

  /** Prepares the checks once. */
  constructor(private readonly settings: UpgradeGateSettings) {
    this.origins = new Set(settings.allowedOrigins);
    this.tokenDigest = settings.token === undefined ? null : digest(settings.token);
  }

  /** Whether this request may be upgraded, and if not the HTTP status to answer with. */
  check(request: IncomingMessage): UpgradeVerdict {
    const url = request.url ?? '/';
    const q = url.indexOf('?');
    // Compared as written: parsing with URL would read `//ws` as a host, not a path.
    const pathname = q < 0 ? url : url.slice(0, q);
    if (pathname !== this.settings.path) return { ok: false, status: 404, reason: 'Not Found' };
    if (this.origins.size > 0) {
      const origin = request.headers.origin;
      if (origin === undefined || !this.origins.has(origin)) return { ok: false, status: 403, reason: 'Forbidden' };
    }
    if (this.tokenDigest !== null) {
      const query = q < 0 ? null : new URLSearchParams(url.slice(q + 1));
      if (!this.tokenMatches(bearerToken(request)) && !this.tokenMatches(query?.get('token') ?? undefined)) {
        return { ok: false, status: 401, reason: 'Unauthorized' };
      }
    }
    return { ok: true };
  }

  /**
   * Compares SHA-256 digests rather than the tokens, so both buffers have equal length and the
   * comparison time reveals neither the token nor its length.
   */
  private tokenMatches(candidate: string | undefined): boolean {
    if (candidate === undefined || this.tokenDigest === null) return false;
    return timingSafeEqual(digest(candidate), this.tokenDigest);
  }
}

/** Answers a refused upgrade with a small HTTP response and closes the socket. */
export function refuseUpgrade(socket: Duplex, status: number, reason: string): void {
  const body = `${status} ${reason}\n`;
  const auth = status === 401 ? 'WWW-Authenticate: Bearer\r\n' : '';
  // The HTTP server allows half-open sockets: destroy once written rather than wait for the peer.
  socket.once('finish', () => socket.destroy());
  socket.end(
    `HTTP/1.1 ${status} ${reason}\r\nConnection: close\r\nContent-Type: text/plain; charset=utf-8\r\n` +
      `${auth}Content-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`,
  );
}

function bearerToken(request: IncomingMessage): string | undefined {
  const header = request.headers.authorization;
  if (header === undefined) return undefined;
  return BEARER.exec(header)?.[1];
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}
