/**
 * A WebSocket client of the daemon's estimate stream (the `ws` package) that keeps every frame
 * it receives, parsed, so a test can await the frame it expects with a deadline.
 */
import WebSocket from 'ws';
import { within } from '../helpers/daemon-process.js';

/** A server frame as JSON (see src/adapters/ws/ws-protocol.ts). */
export interface WsFrame {
  readonly type: string;
  readonly [field: string]: unknown;
}

/** See the module comment. */
export class WsFeed {
  readonly frames: WsFrame[] = [];
  private readonly waiters = new Set<() => void>();

  private constructor(readonly socket: WebSocket) {
    socket.on('message', (data) => {
      this.frames.push(JSON.parse(data.toString()) as WsFrame);
      for (const w of [...this.waiters]) w();
    });
  }

  /** Connects; resolves once the upgrade is done (frames from then on are kept). */
  static async open(url: string): Promise<WsFeed> {
    const socket = new WebSocket(url);
    const feed = new WsFeed(socket);
    await within(new Promise<void>((resolve, reject) => {
      socket.once('open', () => resolve());
      socket.once('error', reject);
    }), 10_000, () => `a WebSocket connection to ${url}`);
    return feed;
  }

  send(request: object): void {
    this.socket.send(JSON.stringify(request));
  }

  /** The first frame at index ≥ `after` that `match` accepts, within `timeoutMs`. */
  waitFor(match: (f: WsFrame) => boolean, options: { after?: number; timeoutMs?: number; what?: string } = {}): Promise<WsFrame> {
    const after = options.after ?? 0;
    let waiter: (() => void) | undefined;
    const found = new Promise<WsFrame>((resolve) => {
      waiter = () => {
        const f = this.frames.slice(after).find(match);
        if (f !== undefined) resolve(f);
      };
      this.waiters.add(waiter);
      waiter();
    });
    return within(found, options.timeoutMs ?? 15_000, () => `${options.what ?? 'a matching frame'}; frames so far: ${this.frames.length}`)
      .finally(() => this.waiters.delete(waiter!));
  }

  /** Closes and resolves once the socket is closed. */
  close(): Promise<void> {
    if (this.socket.readyState === WebSocket.CLOSED) return Promise.resolve();
    return new Promise((resolve) => {
      this.socket.once('close', () => resolve());
      this.socket.terminate();
    });
  }
}
