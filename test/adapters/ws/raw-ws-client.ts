/**
 * A WebSocket client on a bare TCP socket, so a test can stop reading (the kernel buffers fill
 * and the server's writes back up) and later resume and decode what arrives.
 */
import { randomBytes } from 'node:crypto';
import { connect, type Socket } from 'node:net';

/** A raw client: upgraded, able to send text frames, and to pause or resume reading. */
export class RawWsClient {
  private buffered = Buffer.alloc(0);
  private onFrame: ((text: string) => void) | null = null;

  private constructor(readonly socket: Socket) {}

  /** Connects and completes the upgrade; bytes after the 101 response are kept for onText. */
  static async open(port: number, path: string): Promise<RawWsClient> {
    const socket = connect(port, '127.0.0.1');
    await new Promise<void>((resolve, reject) => {
      socket.once('connect', resolve);
      socket.once('error', reject);
    });
    const key = randomBytes(16).toString('base64');
    socket.write(
      `GET ${path} HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n` +
        `Sec-WebSocket-Key: ${key}\r\nSec-WebSocket-Version: 13\r\n\r\n`,
    );
    const client = new RawWsClient(socket);
    await new Promise<void>((resolve, reject) => {
      let head = Buffer.alloc(0);
      const onData = (chunk: Buffer): void => {
        head = Buffer.concat([head, chunk]);
        const end = head.indexOf('\r\n\r\n');
        if (end < 0) return;
        socket.off('data', onData);
        if (!head.subarray(0, end).toString('latin1').startsWith('HTTP/1.1 101')) {
          reject(new Error(`upgrade refused: ${head.subarray(0, end).toString('latin1')}`));
          return;
        }
        client.buffered = head.subarray(end + 4);
        socket.on('data', (more: Buffer) => client.receive(more));
        resolve();
      };
      socket.on('data', onData);
    });
    return client;
  }

  /** Sends one masked text frame (clients must mask, RFC 6455 §5.3). */
  sendText(text: string): void {
    const payload = Buffer.from(text, 'utf8');
    const mask = randomBytes(4);
    const length = payload.length;
    const header = length < 126 ? Buffer.from([0x81, 0x80 | length]) : Buffer.from([0x81, 0x80 | 126, length >> 8, length & 0xff]);
    for (let i = 0; i < length; i++) payload[i]! ^= mask[i % 4]!;
    this.socket.write(Buffer.concat([header, mask, payload]));
  }

  /** Calls `listener` with each text frame received from now on (and any already buffered). */
  onText(listener: (text: string) => void): void {
    this.onFrame = listener;
    this.receive(Buffer.alloc(0));
  }

  /** Resolves with the first text frame for which `predicate` holds. */
  waitFor(predicate: (text: string) => boolean): Promise<string> {
    return new Promise((resolve) => {
      this.onText((text) => {
        if (predicate(text)) {
          this.onFrame = null;
          resolve(text);
        }
      });
    });
  }

  private receive(chunk: Buffer): void {
    if (chunk.length > 0) this.buffered = Buffer.concat([this.buffered, chunk]);
    // Server frames are unmasked; lengths up to 2^53 fit a 64-bit length read as a double.
    while (this.onFrame !== null && this.buffered.length >= 2) {
      const short = this.buffered[1]! & 0x7f;
      const headerLength = short === 126 ? 4 : short === 127 ? 10 : 2;
      if (this.buffered.length < headerLength) return;
      const length = short === 126 ? this.buffered.readUInt16BE(2) : short === 127 ? Number(this.buffered.readBigUInt64BE(2)) : short;
      if (this.buffered.length < headerLength + length) return;
      const opcode = this.buffered[0]! & 0x0f;
      const body = this.buffered.subarray(headerLength, headerLength + length);
      this.buffered = this.buffered.subarray(headerLength + length);
      if (opcode === 0x1) this.onFrame(body.toString('utf8'));
    }
  }
}
