/** Options of the estimate stream server, their defaults, and their validation at the edge. */

/** Thrown by the server's constructor for an option it cannot use; the message names the option. */
export class EstimateStreamOptionsError extends Error {
  override name = 'EstimateStreamOptionsError';
}

/** Options of EstimateStreamServer; every one has a default except `token`. */
export interface EstimateStreamOptions {
  /** Path upgraded to WebSocket (default `/ws`); other paths are answered 404. */
  readonly path?: string;
  /** Most frames queued for one slow client (default 256); beyond, the oldest is dropped. */
  readonly maxQueuedPerClient?: number;
  /** Largest incoming frame (bytes, default 65536); a larger one closes the client with 1009. */
  readonly maxPayloadBytes?: number;
  /** When set, clients send `Authorization: Bearer <token>` or `?token=<token>`, else 401. */
  readonly token?: string;
  /** Exact Origin header values allowed (default empty: any origin); others get 403. */
  readonly allowedOrigins?: readonly string[];
  /** Interval between pings (ms, default 30000); a client that missed the last pong is cut off. */
  readonly heartbeatMs?: number;
  /** Most estimator names plus entity patterns in one subscription (default 64). */
  readonly maxSubscriptionsPerClient?: number;
  /** Incoming messages per second a client may send (default 50); beyond, it is closed with 1008. */
  readonly maxMessagesPerSecondPerClient?: number;
  /**
   * Bytes buffered on a client's socket above which frames are queued (and coalesced) instead of
   * written (default 1 MiB).
   */
  readonly sendHighWaterBytes?: number;
  /** How long stop() waits for clients to answer the close handshake (ms, default 2000). */
  readonly closeGraceMs?: number;
  /** Monotonic clock (ms) for the rate limit; default performance.now. */
  readonly nowMs?: () => number;
  /** Told about an unexpected error while handling a client message (default: ignored). */
  readonly onError?: (error: unknown) => void;
}

/** The options with defaults applied. */
export interface ResolvedEstimateStreamOptions {
  readonly path: string;
  readonly maxQueuedPerClient: number;
  readonly maxPayloadBytes: number;
  readonly token?: string;
  readonly allowedOrigins: readonly string[];
  readonly heartbeatMs: number;
  readonly maxSubscriptionsPerClient: number;
  readonly maxMessagesPerSecondPerClient: number;
  readonly sendHighWaterBytes: number;
  readonly closeGraceMs: number;
  readonly nowMs: () => number;
  readonly onError: (error: unknown) => void;
}

/** The numeric defaults, in one place. */
export const ESTIMATE_STREAM_DEFAULTS = {
  path: '/ws',
  maxQueuedPerClient: 256,
  maxPayloadBytes: 65536,
  heartbeatMs: 30_000,
  maxSubscriptionsPerClient: 64,
  maxMessagesPerSecondPerClient: 50,
  sendHighWaterBytes: 1024 * 1024,
  closeGraceMs: 2000,
} as const;

type CountOption = Exclude<keyof typeof ESTIMATE_STREAM_DEFAULTS, 'path'>;

/** Applies defaults and checks every option; throws EstimateStreamOptionsError naming the first bad one. */
export function resolveEstimateStreamOptions(options: EstimateStreamOptions): ResolvedEstimateStreamOptions {
  const path = options.path ?? ESTIMATE_STREAM_DEFAULTS.path;
  if (typeof path !== 'string' || !path.startsWith('/') || /[?#\s]/.test(path)) {
    throw new EstimateStreamOptionsError(`path: expected a path starting with "/" without "?", "#" or spaces, got ${JSON.stringify(path)}`);
  }
  const token = options.token;
  if (token !== undefined && (typeof token !== 'string' || token.length === 0 || /\s/.test(token))) {
    throw new EstimateStreamOptionsError('token: expected a non-empty string without spaces');
  }
  const allowedOrigins = options.allowedOrigins ?? [];
  if (!Array.isArray(allowedOrigins) || allowedOrigins.some((o) => typeof o !== 'string' || o.length === 0)) {
    throw new EstimateStreamOptionsError('allowedOrigins: expected an array of non-empty strings');
  }
  const count = (name: CountOption): number => {
    const value = options[name] ?? ESTIMATE_STREAM_DEFAULTS[name];
    if (!Number.isSafeInteger(value) || value < 1) {
      throw new EstimateStreamOptionsError(`${name}: expected a positive integer, got ${String(value)}`);
    }
    return value;
  };
  return {
    path,
    ...(token === undefined ? {} : { token }),
    allowedOrigins: [...allowedOrigins],
    maxQueuedPerClient: count('maxQueuedPerClient'),
    maxPayloadBytes: count('maxPayloadBytes'),
    heartbeatMs: count('heartbeatMs'),
    maxSubscriptionsPerClient: count('maxSubscriptionsPerClient'),
    maxMessagesPerSecondPerClient: count('maxMessagesPerSecondPerClient'),
    sendHighWaterBytes: count('sendHighWaterBytes'),
    closeGraceMs: count('closeGraceMs'),
    nowMs: options.nowMs ?? (() => performance.now()),
    onError: options.onError ?? (() => {}),
  };
}
