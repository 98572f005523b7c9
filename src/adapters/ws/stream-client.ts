/**
 * One connected WebSocket client: its subscription, its bounded send queue and its rate limit.
 *
 * Frames are written straight to the socket while it keeps up. Once the socket holds more than
 * `sendHighWaterBytes`, or frames are already waiting, new frames go to the coalescing queue,
 * which is drained from the socket's write callbacks as the client reads. Buffered bytes thus
 * stay below the high-water mark plus one frame, and queued frames below `maxQueued`.
 */
import { WebSocket } from 'ws';
import { ClientSubscription } from './client-subscription.js';
import { CoalescingSendQueue, type PushOutcome } from './coalescing-send-queue.js';
import { MessageRateLimiter } from './message-rate-limiter.js';

/** Queue key of the snapshot; estimate keys always contain NUL, this one never does. */
const SNAPSHOT_KEY = 'snapshot';

/** Per-client limits, taken from the server's options. */
export interface StreamClientSettings {
  readonly maxQueued: number;
  readonly sendHighWaterBytes: number;
  readonly maxMessagesPerSecond: number;
  readonly nowMs: () => number;
}

/** Running totals over every client the server has had (monotonic, for metrics). */
export interface StreamTotals {
  dropped: number;
  coalesced: number;
}

/** One client's figures. */
export interface StreamClientStats {
  readonly id: number;
  /** Frames waiting in the queue. */
  readonly queued: number;
  /** Bytes accepted by the socket but not yet sent. */
  readonly bufferedBytes: number;
  readonly dropped: number;
  readonly coalesced: number;
  readonly subscribed: boolean;
}

/** A connected client and what it is owed. */
export class StreamClient {
  /** The active subscription; null until the client subscribes. */
  subscription: ClientSubscription | null = null;
  /** Cleared at each ping, set by the pong: still false at the next ping means the client is gone. */
  alive = true;
  /** Resolves when the socket has closed. */
  readonly closed: Promise<void>;
  private readonly queue: CoalescingSendQueue;
  private readonly limiter: MessageRateLimiter;
  /** One bound callback for every write, so sending allocates no closure. */
  private readonly onWritten = (): void => {
    if (this.queue.size > 0) this.pump();
  };

  /** Wraps an open socket. */
  constructor(
    readonly id: number,
    private readonly socket: WebSocket,
    private readonly settings: StreamClientSettings,
    private readonly totals: StreamTotals,
  ) {
    this.queue = new CoalescingSendQueue(settings.maxQueued);
    this.limiter = new MessageRateLimiter(settings.maxMessagesPerSecond, settings.nowMs);
    this.closed = new Promise((resolve) => {
      socket.once('close', () => {
        this.queue.clear();
        resolve();
      });
    });
  }

  /** True while frames can still be sent. */
  get open(): boolean {
    return this.socket.readyState === WebSocket.OPEN;
  }

  /** Counts one incoming message; false when the client is over its rate. */
  admitMessage(): boolean {
    return this.limiter.tryTake();
  }

  /** Sends a frame that a newer frame with the same key makes obsolete (an estimate). */
  sendLatest(key: string, frame: string): void {
    if (!this.open) return;
    if (this.canWriteNow()) this.write(frame);
    else this.count(this.queue.pushLatest(key, frame));
  }

  /** Sends a frame that must keep its place (health change, reply, error). */
  sendInOrder(frame: string): void {
    if (!this.open) return;
    if (this.canWriteNow()) this.write(frame);
    else this.count(this.queue.pushInOrder(frame));
  }

  /**
   * Installs a new subscription and sends its acknowledgement and snapshot. Queued estimates are
   * superseded by the snapshot, which holds the latest of everything now wanted.
   */
  resubscribe(subscription: ClientSubscription, subscribedFrame: string, snapshotFrame: string): void {
    this.subscription = subscription;
    this.totals.coalesced += this.queue.supersedeKeyed();
    this.sendInOrder(subscribedFrame);
    // Keyed, so a client that re-subscribes while stalled holds one snapshot, not one per request.
    this.sendLatest(SNAPSHOT_KEY, snapshotFrame);
  }

  /** Sends a WebSocket ping for the heartbeat. */
  ping(): void {
    if (this.open) this.socket.ping();
  }

  /** Starts the close handshake. */
  close(code: number, reason: string): void {
    this.queue.clear();
    this.socket.close(code, reason);
  }

  /** Drops the connection without a handshake. */
  terminate(): void {
    this.queue.clear();
    this.socket.terminate();
  }

  /** This client's figures. */
  stats(): StreamClientStats {
    return {
      id: this.id,
      queued: this.queue.size,
      bufferedBytes: this.socket.bufferedAmount,
      dropped: this.queue.dropped,
      coalesced: this.queue.coalesced,
      subscribed: this.subscription !== null,
    };
  }

  private canWriteNow(): boolean {
    return this.queue.size === 0 && this.socket.bufferedAmount < this.settings.sendHighWaterBytes;
  }

  private write(frame: string): void {
    this.socket.send(frame, this.onWritten);
  }

  /** Writes queued frames until the socket is full again or the queue is empty. */
  private pump(): void {
    while (this.open && this.socket.bufferedAmount < this.settings.sendHighWaterBytes) {
      const frame = this.queue.shift();
      if (frame === undefined) return;
      this.socket.send(frame, this.onWritten);
    }
  }

  private count(outcome: PushOutcome): void {
    if (outcome === 'coalesced') this.totals.coalesced++;
    else if (outcome === 'dropped-oldest') this.totals.dropped++;
  }
}
