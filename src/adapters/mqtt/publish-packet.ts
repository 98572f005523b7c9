/**
 * The bytes of a QoS 0 PUBLISH packet, as the MQTT standard lays them out (3.1.1 §3.3 and 5.0
 * §3.3): fixed header (type 3, retain bit; DUP and QoS zero), remaining length as a variable
 * byte integer (§2.2.3 / §1.5.5), the topic as a length-prefixed UTF-8 string, under MQTT 5 an
 * empty property list, then the payload. QoS 0 has no packet identifier. The connection writes
 * its estimates with this directly into its batch: going through the client library cost
 * several small stream writes, a packet object and a dozen debug calls per estimate.
 */

/** Largest remaining length a variable byte integer can hold (MQTT 3.1.1 §2.2.3). */
export const MAX_REMAINING_LENGTH = 268_435_455;

/** Bytes of a variable byte integer holding `n`. */
function varIntSize(n: number): number {
  return n < 128 ? 1 : n < 16_384 ? 2 : n < 2_097_152 ? 3 : 4;
}

/** Remaining length of a QoS 0 PUBLISH with these UTF-8 sizes. */
function remainingLength(topicBytes: number, payloadBytes: number, protocolVersion: number): number {
  return 2 + topicBytes + (protocolVersion === 5 ? 1 : 0) + payloadBytes;
}

/** Whole packet size in bytes, or -1 when it exceeds what MQTT can frame. */
export function publishPacketSize(topicBytes: number, payloadBytes: number, protocolVersion: number): number {
  const remaining = remainingLength(topicBytes, payloadBytes, protocolVersion);
  if (topicBytes > 65_535 || remaining > MAX_REMAINING_LENGTH) return -1;
  return 1 + varIntSize(remaining) + remaining;
}

/**
 * Writes the packet at `offset` of `target` (which must have room for `publishPacketSize`) and
 * returns the offset after it. `topicBytes` and `payloadBytes` are the UTF-8 sizes.
 */
export function writePublishPacket(
  target: Buffer, offset: number, topic: string, topicBytes: number, payload: string | Buffer, payloadBytes: number,
  retain: boolean, protocolVersion: number,
): number {
  let at = offset;
  target[at++] = 0x30 | (retain ? 1 : 0);
  let remaining = remainingLength(topicBytes, payloadBytes, protocolVersion);
  do {
    let digit = remaining % 128;
    remaining = Math.floor(remaining / 128);
    if (remaining > 0) digit |= 0x80;
    target[at++] = digit;
  } while (remaining > 0);
  target[at++] = topicBytes >> 8;
  target[at++] = topicBytes & 0xff;
  at += target.write(topic, at, topicBytes, 'utf8');
  if (protocolVersion === 5) target[at++] = 0;
  if (typeof payload === 'string') at += target.write(payload, at, payloadBytes, 'utf8');
  else at += payload.copy(target, at);
  return at;
}
