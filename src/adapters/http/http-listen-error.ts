/** Why the admin HTTP server could not start listening, naming the host and port it tried. */

/** Codes of HttpListenError (part of the daemon's error catalogue). */
export type HttpListenErrorCode = 'HTTP_PORT_IN_USE' | 'HTTP_LISTEN_FAILED';

/** Thrown by AdminHttpServer.start() when the port cannot be bound. */
export class HttpListenError extends Error {
  /** HTTP_PORT_IN_USE when another process holds the port, else HTTP_LISTEN_FAILED. */
  readonly code: HttpListenErrorCode;
  readonly host: string;
  readonly port: number;

  /** Wraps the system error `cause` from listen(). */
  constructor(host: string, port: number, cause: unknown) {
    const sysCode = (cause as { code?: unknown } | null)?.code;
    const where = `${host.includes(':') ? `[${host}]` : host}:${port}`;
    const inUse = sysCode === 'EADDRINUSE';
    super(
      inUse
        ? `cannot listen on ${where}: the port is already in use (is another daemon running? change http.port)`
        : `cannot listen on ${where}: ${cause instanceof Error ? cause.message : String(cause)}`,
      { cause },
    );
    this.name = 'HttpListenError';
    this.code = inUse ? 'HTTP_PORT_IN_USE' : 'HTTP_LISTEN_FAILED';
    this.host = host;
    this.port = port;
  }
}
