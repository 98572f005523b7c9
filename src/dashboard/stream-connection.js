/**
 * The page's WebSocket to the daemon: subscribes to filtered and smoothed estimates with
 * health changes, asks for measurement frames too and carries on without them when the
 * daemon refuses that field, pings so a dead link is noticed, and reconnects by itself
 * with backoff when the connection drops.
 */
import { ReconnectBackoff } from './reconnect-backoff.js';

const WITH_MEASUREMENTS = 'with-measurements';
const ESTIMATES_ONLY = 'estimates-only';
const BASE_REQUEST = { op: 'subscribe', kinds: ['filtered', 'smoothed'], health: true };

/**
 * @typedef {{ state: 'connecting' | 'live' | 'waiting', retryAtMs?: number,
 *   measurements: boolean | null }} StreamStatus
 */

export class StreamConnection {
  /**
   * @param {{ url: string, onFrame: (frame: any) => void, onStatus: (s: StreamStatus) => void,
   *   onLive?: () => void, pingEveryMs?: number, silenceLimitMs?: number }} options
   *   pingEveryMs default 15000; silenceLimitMs (no frame at all: reconnect) default 40000
   */
  constructor(options) {
    this.options = options;
    this.backoff = new ReconnectBackoff();
    this.socket = null;
    this.retryTimer = 0;
    this.watchTimer = 0;
    this.lastFrameMs = 0;
    this.measurements = null;
    this.stopped = false;
  }

  /** Opens the connection (and keeps it open until stop()). */
  start() {
    this.stopped = false;
    this.open();
    const every = this.options.pingEveryMs ?? 15_000;
    this.watchTimer = setInterval(() => this.watch(), every);
  }

  /** Closes the connection for good. */
  stop() {
    this.stopped = true;
    clearTimeout(this.retryTimer);
    clearInterval(this.watchTimer);
    this.socket?.close(1000);
  }

  open() {
    this.status('connecting');
    const socket = new WebSocket(this.options.url);
    this.socket = socket;
    socket.addEventListener('message', (event) => this.receive(event.data));
    socket.addEventListener('close', () => {
      if (this.socket !== socket) return;
      this.socket = null;
      if (!this.stopped) this.scheduleRetry();
    });
  }

  scheduleRetry() {
    const delayMs = this.backoff.nextDelayMs();
    this.status('waiting', Date.now() + delayMs);
    this.retryTimer = setTimeout(() => this.open(), delayMs);
  }

  /** Pings the daemon; a link silent past the limit is closed, which starts a reconnect. */
  watch() {
    const socket = this.socket;
    if (socket === null || socket.readyState !== WebSocket.OPEN) return;
    if (Date.now() - this.lastFrameMs > (this.options.silenceLimitMs ?? 40_000)) socket.close(4000, 'silent');
    else socket.send('{"op":"ping","id":"keepalive"}');
  }

  /** @param {unknown} text */
  receive(text) {
    if (typeof text !== 'string') return;
    this.lastFrameMs = Date.now();
    let frame;
    try {
      frame = JSON.parse(text);
    } catch {
      return;
    }
    switch (frame?.type) {
      case 'hello':
        this.send({ ...BASE_REQUEST, id: WITH_MEASUREMENTS, measurements: true });
        return;
      case 'subscribed':
        if (frame.id === WITH_MEASUREMENTS) this.measurements = true;
        this.backoff.reset();
        this.status('live');
        this.options.onLive?.();
        return;
      case 'error':
        // A daemon without measurement frames refuses the field: fall back to estimates alone.
        if (frame.id === WITH_MEASUREMENTS) {
          this.measurements = false;
          this.send({ ...BASE_REQUEST, id: ESTIMATES_ONLY });
        }
        return;
      case 'pong':
        return;
      default:
        this.options.onFrame(frame);
    }
  }

  /** @param {object} request */
  send(request) {
    if (this.socket?.readyState === WebSocket.OPEN) this.socket.send(JSON.stringify(request));
  }

  /** @param {StreamStatus['state']} state @param {number} [retryAtMs] */
  status(state, retryAtMs) {
    this.options.onStatus(retryAtMs === undefined
      ? { state, measurements: this.measurements }
      : { state, retryAtMs, measurements: this.measurements });
  }
}
