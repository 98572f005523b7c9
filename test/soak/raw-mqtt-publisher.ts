/**
 * A minimal MQTT 5 publisher for the soak's load: QoS 1 PUBLISH packets encoded ahead by the
 * generator thread and written to the broker one tick (a few thousand packets) per write. At
 * 20,000 messages a second a general client's per-message work would load the soak's own
 * thread more than the daemon under test; here each tick costs one write plus a packet id per
 * message, and the number of unacknowledged messages is bounded.
 *
 * QoS 1 because the daemon subscribes at QoS 1 with a persistent session: what the broker has
 * acknowledged reaches the daemon even across a reconnect, so "published" (acknowledged) versus
 * the daemon's counters is a loss figure that a busy machine cannot blur.
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
 * Writes one MQTT 5 QoS 1 PUBLISH packet (no properties, packet id 0 for the sender to fill
 * in) for `topic` and `payload` (both ASCII, as the scenario writes them) into `buf` at `at`.
 * Returns the offset of the packet id; the packet ends 3 + payload.length bytes after it.
 */
export function encodePublishInto(buf: Buffer, at: number, topic: string, payload: string): number {
  const remaining = 2 + topic.length + 2 + 1 + payload.length;
  let i = at;
  buf[i++] = 0x32;
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
  const idAt = i;
  buf.writeUInt16BE(0, i);
  i += 2;
  buf[i++] = 0; // property length
  buf.write(payload, i, 'latin1');
  return idAt;
}

/** Size of the packet encodePublishInto writes. */
export function publishPacketLength(topic: string, payload: string): number {
  const remaining = 2 + topic.length + 2 + 1 + payload.length;
  return 1 + varintLength(remaining) + remaining;
}

/** A connected raw publisher. */
export class RawMqttPublisher {
  private nextId = 1;
  private unacked = 0;
  private acked = 0;
  private pending = Buffer.alloc(0);
  private onAck: () => void = () => {};

  private constructor(private readonly socket: Socket) {}

  /** Messages written and not yet acknowledged. */
  get inFlight(): number {
    return this.unacked;
  }

  /** Messages the broker has acknowledged. */
  get acknowledged(): number {
    return this.acked;
  }

  /** Called after each batch of PUBACKs read from the socket. */
  onAcknowledged(listener: () => void): void {
    this.onAck = listener;
  }

  /** Gives each packet (at `idOffsets` in `packets`) the next packet id and writes them all. */
  writeWithIds(packets: Buffer, idOffsets: Int32Array, done: (err?: Error | null) => void): void {
    for (let k = 0; k < idOffsets.length; k++) {
      packets.writeUInt16BE(this.nextId, idOffsets[k]!);
      this.nextId = this.nextId === 65_535 ? 1 : this.nextId + 1;
    }
    this.unacked += idOffsets.length;
    this.socket.write(packets, done);
  }

  /** Counts the PUBACKs in what the broker sent (anything else is skipped). */
  private readAcks(chunk: Buffer): void {
    let buf = this.pending.length === 0 ? chunk : Buffer.concat([this.pending, chunk]);
    let i = 0;
    let acks = 0;
    for (;;) {
      if (buf.length - i < 2) break;
      let length = 0;
      let multiplier = 1;
      let j = i + 1;
      let complete = false;
      while (j < buf.length) {
        const byte = buf[j++]!;
        length += (byte & 0x7f) * multiplier;
        multiplier *= 128;
        if ((byte & 0x80) === 0) {
          complete = true;
          break;
        }
      }
      if (!complete || buf.length - j < length) break;
      if ((buf[i]! & 0xf0) === 0x40) acks += 1;
      i = j + length;
    }
    buf = buf.subarray(i);
    this.pending = Buffer.from(buf);
    if (acks > 0) {
      this.unacked -= acks;
      this.acked += acks;
      this.onAck();
    }
  }

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
    const publisher = new RawMqttPublisher(socket);
    socket.on('data', (chunk: Buffer) => publisher.readAcks(chunk));
    return publisher;
  }

  /** True while the socket holds less than `limitBytes` unsent. */
  hasRoom(limitBytes: number): boolean {
    return this.socket.writableLength < limitBytes;
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
