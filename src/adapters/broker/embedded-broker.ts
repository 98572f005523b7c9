/**
 * The embedded MQTT broker, started when `broker.url` is absent so the daemon (and the demo
 * simulator) work without installing a broker.
 *
 * It speaks MQTT 3.1.1 only: a version 5 CONNECT is refused. The daemon therefore connects to
 * it with protocol version 4, which still keeps persistent sessions (`clean: false` alone keeps
 * a 3.1.1 session) but has no session expiry, user properties or message expiry. Deployments
 * that need MQTT 5 run an external broker and set `broker.url`.
 */
import { createServer, type Server } from 'node:net';
import { Aedes } from 'aedes';

/** Where the embedded broker listens. */
export interface EmbeddedBrokerOptions {
  /** Interface to bind. Default `127.0.0.1`, so the broker is not reachable from the network. */
  readonly host?: string;
  /** TCP port; `0` lets the kernel choose one (the chosen port is in the returned `url`). */
  readonly port: number;
}

/** A running embedded broker. */
export interface EmbeddedBroker {
  /** The URL to connect to, e.g. `mqtt://127.0.0.1:18830`. */
  readonly url: string;
  /** Always 4 (MQTT 3.1.1): the only protocol version this broker accepts. */
  readonly protocolVersion: 4;
  /** The bound port (useful when `port` was 0). */
  readonly port: number;
  /** Closes every client connection and the listener. Safe to call more than once. */
  stop(): Promise<void>;
}

/** Thrown by {@link startEmbeddedBroker} when the port is taken; `code` is `EMBEDDED_BROKER_PORT_IN_USE`. */
export class EmbeddedBrokerPortInUseError extends Error {
  /** Stable code for the error catalogue and for callers that branch on it. */
  readonly code = 'EMBEDDED_BROKER_PORT_IN_USE';
  constructor(
    readonly host: string,
    readonly port: number,
    options: { cause: unknown },
  ) {
    super(
      `the embedded broker cannot listen on ${host}:${port}: the port is already in use ` +
        `(another broker or a second daemon?). Choose a free port with the config key ` +
        `embeddedBroker.port, or set broker.url to use the broker that is already running.`,
      options,
    );
    this.name = 'EmbeddedBrokerPortInUseError';
  }
}

/**
 * Starts the embedded broker on a node:net server.
 * @throws {EmbeddedBrokerPortInUseError} when `host:port` is taken.
 */
export async function startEmbeddedBroker(options: EmbeddedBrokerOptions): Promise<EmbeddedBroker> {
  const host = options.host ?? '127.0.0.1';
  const broker = await Aedes.createBroker();
  const server = createServer((socket) => broker.handle(socket));
  try {
    await listen(server, host, options.port);
  } catch (err) {
    await closeBroker(broker);
    if ((err as NodeJS.ErrnoException).code === 'EADDRINUSE') {
      throw new EmbeddedBrokerPortInUseError(host, options.port, { cause: err });
    }
    throw err;
  }
  const address = server.address();
  const port = address !== null && typeof address === 'object' ? address.port : options.port;
  const urlHost = host.includes(':') ? `[${host}]` : host;
  let stopping: Promise<void> | undefined;
  return {
    url: `mqtt://${urlHost}:${port}`,
    protocolVersion: 4,
    port,
    stop() {
      // Remember the first stop so later calls wait for the same shutdown instead of failing.
      stopping ??= (async () => {
        const serverClosed = new Promise<void>((resolve) => server.close(() => resolve()));
        // Closing the broker ends every client socket; only then can the server finish closing.
        await closeBroker(broker);
        await serverClosed;
      })();
      return stopping;
    },
  };
}

function listen(server: Server, host: string, port: number): Promise<void> {
  return new Promise((resolve, reject) => {
    const onError = (err: Error): void => reject(err);
    server.once('error', onError);
    server.listen(port, host, () => {
      server.off('error', onError);
      resolve();
    });
  });
}

function closeBroker(broker: Aedes): Promise<void> {
  return new Promise((resolve) => broker.close(() => resolve()));
}
