/**
 * A minimal MQTT 5 publisher for the soak's load: QoS 0 PUBLISH packets encoded ahead by the
 * generator thread and written to the broker one tick (a few thousand packets) per write. At
 * 20,000 messages a second a general client's per-message work would load the soak's own
 * thread more than the daemon under test; here each tick costs one write, flow-controlled by
 * the socket's drain event.
 */
import { connect, type Socket } from 'node:net';

/** Appends the MQTT variable-byte integer (remaining length) of `n` to `out`. */
function pushVarint(out: number[], n: number): void {
  do {
    let byte = n % 128;
    n = Math.floor(n / 128);
    if (n > 0) byte |= 0x80;
    out.push(byte);
  } while (n > 0);
}

/** Bytes of the variable-byte integer for `n`. */
export function varintLength(n: number): number {
  return n < 128 ? 1 : n < 16_384 ? 2 : n < 2_097_152 ? 3 : 4;
}

/**
 * Writes one MQTT 5 QoS 0 PUBLISH packet (no properties) for `topic` and `payload` (both
 * ASCII, as the scenario writes them) into `buf` at `at`; returns the offset after it.
 */
export function encodePublishInto(buf: Buffer, at: number, topic: string, payload: string): number {
  const remaining = 2 + topic.length + 1 + payload.length;
  let i = at;
  buf[i++] = 0x30;
  let n = remaining;
  do {
    let byte = n % 128;
    n = Math.floor(n / 128);
    if (n > 0) byte |= 0x80;
    buf[i++] = byte;
  } while (n > 0);
  buf.writeUInt16BE(topic.length, i);
  i += 2;
  i += buf.write(topic, i, 'latin1');
  buf[i++] = 0; // property length
  i += buf.write(payload, i, 'latin1');
  return i;
}

/** Size of the packet encodePublishInto writes. */
export function publishPacketLength(topic: string, payload: string): number {
  const remaining = 2 + topic.length + 1 + payload.length;
  return 1 + varintLength(remaining) + remaining;
}

/** A connected raw publisher. */
export class RawMqttPublisher {
  private constructor(private readonly socket: Socket) {}

  /** Connects with a clean start and keep-alive 0 (no pings), resolving on a successful CONNACK. */
  static async connect(url: string, clientId: string): Promise<RawMqttPublisher> {
    const { hostname, port } = new URL(url);
    const socket = connect(Number(port), hostname);
    socket.setNoDelay(true);
    await new Promise<void>((resolve, reject) => {
      socket.once('connect', resolve);
      socket.once('error', reject);
    });
    const id = Buffer.from(clientId, 'utf8');
    const variable = [0x00, 0x04, 0x4d, 0x51, 0x54, 0x54, 0x05, 0x02, 0x00, 0x00, 0x00];
    const body = Buffer.concat([Buffer.from(variable), Buffer.from([id.length >> 8, id.length & 0xff]), id]);
    const header: number[] = [0x10];
    pushVarint(header, body.length);
    socket.write(Buffer.concat([Buffer.from(header), body]));
    await new Promise<void>((resolve, reject) => {
      socket.once('data', (chunk: Buffer) => {
        // CONNACK: 0x20, length, flags, reason code (0 = success), properties.
        if (chunk[0] === 0x20 && chunk[3] === 0) resolve();
        else reject(new Error(`the broker refused the soak publisher: ${chunk.subarray(0, 8).toString('hex')}`));
      });
      socket.once('error', reject);
    });
    socket.on('data', () => {}); // nothing else is expected; keep the socket flowing
    return new RawMqttPublisher(socket);
  }

  /** True while the socket holds less than `limitBytes` unsent. */
  hasRoom(limitBytes: number): boolean {
    return this.socket.writableLength < limitBytes;
  }

  /** Writes encoded packets; `done` runs once they are handed to the kernel (or failed). */
  write(packets: Uint8Array, done: (err?: Error | null) => void): void {
    this.socket.write(packets, done);
  }

  /** Runs `listener` once the socket has drained. */
  onceDrained(listener: () => void): void {
    this.socket.once('drain', listener);
  }

  /** Sends DISCONNECT and closes. */
  async end(): Promise<void> {
    await new Promise<void>((resolve) => {
      if (this.socket.destroyed) {
        resolve();
        return;
      }
      this.socket.end(Buffer.from([0xe0, 0x00]), () => resolve());
      this.socket.once('close', () => resolve());
    });
    this.socket.destroy();
  }
}
