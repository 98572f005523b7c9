import { EventEmitter } from 'node:events';
import type { MqttClient } from 'mqtt';
import mqttPacket from 'mqtt-packet';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { createClientSender } from '../../../src/adapters/mqtt/client-sender.js';
import { testBrokerConfig } from '../../helpers/mqtt-fixtures.js';

/** A socket stand-in: records what reaches it and lets the test say when it is full. */
class FakeSocket extends EventEmitter {
  writable = true;
  writableNeedDrain = false;
  writableLength = 0;
  destroyed = false;
  noDelay = false;
  corks = 0;
  readonly written: Buffer[] = [];
  cork(): void {
    this.corks += 1;
  }
  uncork(): void {
    this.corks -= 1;
  }
  write(chunk: Buffer): boolean {
    this.written.push(Buffer.from(chunk));
    return true;
  }
  setNoDelay(on: boolean): void {
    this.noDelay = on;
  }
}

function fakeClient() {
  const stream = new FakeSocket();
  const published: Array<{ topic: string; qos: number; hasCallback: boolean }> = [];
  const client = {
    connected: true,
    stream,
    publish(topic: string, _payload: unknown, opts: { qos: number }, cb?: () => void) {
      published.push({ topic, qos: opts.qos, hasCallback: cb !== undefined });
    },
  };
  return { client: client as unknown as MqttClient, stream, published };
}

function topicsIn(bytes: Buffer): string[] {
  const parser = mqttPacket.parser({ protocolVersion: 5 });
  const out: string[] = [];
  parser.on('packet', (p: mqttPacket.Packet) => out.push((p as mqttPacket.IPublishPacket).topic));
  parser.parse(bytes);
  return out;
}

function sender(c: MqttClient) {
  return createClientSender({
    broker: testBrokerConfig('mqtt://127.0.0.1:1883', { protocolVersion: 5 }),
    options: { flushDelayMs: 1 },
    client: () => c,
    open: () => true,
  });
}

beforeEach(() => {
  vi.useFakeTimers();
});
afterEach(() => {
  vi.useRealTimers();
});

describe('client sender', () => {
  it('frames QoS 0 into the batch and leaves QoS 1 to the client with a completion callback', () => {
    const f = fakeClient();
    const s = sender(f.client);
    s.connected(f.client);
    s.queue.offer('yard/tug-01/estimate', '{}', 0, false);
    s.queue.offer('yard/tug-02/estimate', '{}', 1, false);
    vi.advanceTimersByTime(1);
    expect(topicsIn(Buffer.concat(f.stream.written))).toEqual(['yard/tug-01/estimate']);
    expect(f.published).toEqual([{ topic: 'yard/tug-02/estimate', qos: 1, hasCallback: true }]);
    expect(s.queue.inFlightCount).toBe(1);
  });

  it('holds messages while the socket wants a drain and sends them, in order, on drain', () => {
    const f = fakeClient();
    const s = sender(f.client);
    s.connected(f.client);
    f.stream.writableNeedDrain = true;
    for (let i = 1; i <= 3; i += 1) s.queue.offer(`yard/tug-0${i}/estimate`, '{}', 0, false);
    vi.advanceTimersByTime(1);
    expect(f.stream.written).toHaveLength(0);
    expect(s.queue.queuedCount).toBe(3);
    f.stream.writableNeedDrain = false;
    f.stream.emit('drain');
    vi.advanceTimersByTime(1);
    expect(s.queue.queuedCount).toBe(0);
    expect(topicsIn(Buffer.concat(f.stream.written))).toEqual(['yard/tug-01/estimate', 'yard/tug-02/estimate', 'yard/tug-03/estimate']);
  });

  it('turns Nagle off and watches drain once per socket', () => {
    const f = fakeClient();
    const s = sender(f.client);
    s.connected(f.client);
    s.connected(f.client);
    expect(f.stream.noDelay).toBe(true);
    expect(f.stream.listenerCount('drain')).toBe(1);
  });

  it('sends nothing while disconnected and everything once connected again', () => {
    const f = fakeClient();
    const s = sender(f.client);
    (f.client as { connected: boolean }).connected = false;
    s.queue.offer('tank-farm/tank-a/estimate', '{}', 0, true);
    vi.advanceTimersByTime(1);
    expect(f.stream.written).toHaveLength(0);
    (f.client as { connected: boolean }).connected = true;
    s.connected(f.client);
    vi.advanceTimersByTime(1);
    expect(topicsIn(Buffer.concat(f.stream.written))).toEqual(['tank-farm/tank-a/estimate']);
  });
});
