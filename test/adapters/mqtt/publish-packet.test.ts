import mqttPacket from 'mqtt-packet';
import { describe, expect, it } from 'vitest';
import { publishPacketSize, writePublishPacket } from '../../../src/adapters/mqtt/publish-packet.js';

/** Encodes with our writer. */
function encode(topic: string, payload: string | Buffer, retain: boolean, protocolVersion: 4 | 5): Buffer {
  const topicBytes = Buffer.byteLength(topic);
  const payloadBytes = typeof payload === 'string' ? Buffer.byteLength(payload) : payload.length;
  const size = publishPacketSize(topicBytes, payloadBytes, protocolVersion);
  const target = Buffer.alloc(size + 8, 0xee);
  const end = writePublishPacket(target, 3, topic, topicBytes, payload, payloadBytes, retain, protocolVersion);
  expect(end - 3).toBe(size);
  expect(target[2]).toBe(0xee);
  expect(target[end]).toBe(0xee);
  return target.subarray(3, end);
}

/** Decodes with the mqtt-packet parser (the reference implementation used by mqtt.js). */
function decode(bytes: Buffer, protocolVersion: 4 | 5): mqttPacket.IPublishPacket[] {
  const parser = mqttPacket.parser({ protocolVersion });
  const out: mqttPacket.IPublishPacket[] = [];
  parser.on('packet', (p: mqttPacket.Packet) => out.push(p as mqttPacket.IPublishPacket));
  parser.on('error', (err: Error) => {
    throw err;
  });
  parser.parse(bytes);
  return out;
}

describe('QoS 0 PUBLISH packet', () => {
  for (const protocolVersion of [4, 5] as const) {
    it(`matches the reference encoder byte for byte under protocol version ${protocolVersion}`, () => {
      const cases: Array<[string, string | Buffer, boolean]> = [
        ['statecast/yard/tug-00001/estimate', '{"entity":"tug-00001","x":[1.5,-2]}', false],
        ['statecast/tanks/tank-a/estimate', '', true],
        ['tank-farm/réservoir/ölstand', 'niveau 3,2 m — ok', false],
        ['statecast/yard/tug-00002/estimate', Buffer.from([0, 1, 2, 255]), true],
        // Remaining lengths on both sides of the one- and two-byte length boundaries.
        ...[60, 100, 124, 125, 126, 200, 16_380, 16_400, 70_000].map((n): [string, string, boolean] => ['yard/t', 'x'.repeat(n), false]),
      ];
      for (const [topic, payload, retain] of cases) {
        const ours = encode(topic, payload, retain, protocolVersion);
        const reference = mqttPacket.generate({ cmd: 'publish', topic, payload, qos: 0, retain, dup: false, messageId: 0 }, { protocolVersion });
        expect(ours.equals(reference), `${topic} (${typeof payload === 'string' ? payload.length : payload.length} payload bytes)`).toBe(true);
      }
    });
  }

  it('round-trips through the reference parser, several packets in one buffer', () => {
    const parts = [encode('yard/a/estimate', '{"seq":1}', false, 5), encode('yard/b/estimate', '{"seq":2}', true, 5)];
    const packets = decode(Buffer.concat(parts), 5);
    expect(packets.map((p) => [p.topic, p.payload.toString(), p.retain, p.qos])).toEqual([
      ['yard/a/estimate', '{"seq":1}', false, 0],
      ['yard/b/estimate', '{"seq":2}', true, 0],
    ]);
  });

  it('refuses a topic longer than a two-byte length can say', () => {
    expect(publishPacketSize(65_536, 10, 4)).toBe(-1);
    expect(publishPacketSize(65_535, 10, 4)).toBeGreaterThan(0);
  });
});
