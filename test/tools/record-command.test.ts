import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startEmbeddedBroker } from '../../src/adapters/broker/embedded-broker.js';
import { readRecording } from '../../src/tools/recording-reader.js';
import { runRecordCommand } from '../../src/tools/record-command.js';
import type { ToolIo } from '../../src/tools/tool-io.js';
import { startMosquitto } from '../helpers/mosquitto.js';
import { writeDemoConfig } from './recording-fixtures.js';

let dir = '';
let config = '';

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'statecast-record-'));
  config = await writeDemoConfig(dir, ['tank-farm']);
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

/** A terminal-like io whose status line tells how many messages the recorder has written. */
function recorderIo(): { io: ToolIo; ready: Promise<void>; written: (n: number) => Promise<void>; stop: () => void; out: () => string; err: () => string } {
  let out = '';
  let err = '';
  let clockMs = 1_767_225_600_000;
  const controller = new AbortController();
  let onReady = (): void => undefined;
  const ready = new Promise<void>((resolve) => (onReady = resolve));
  const waiters: { n: number; resolve: () => void }[] = [];
  let most = 0;
  const io: ToolIo = {
    stdout: { write: (s: string) => (out += s) },
    stderr: {
      write: (s: string) => {
        err += s;
        if (s.startsWith('recording ')) onReady();
        const seen = /record {2}([\d,]+) messages/.exec(s);
        if (seen !== null) most = Math.max(most, Number(seen[1]!.replace(/,/g, '')));
        for (const w of waiters) if (most >= w.n) w.resolve();
      },
    },
    isTTY: true,
    signal: controller.signal,
    env: {},
    // A second per reading: every message redraws the status line.
    nowMs: () => (clockMs += 1000),
  };
  const written = (n: number): Promise<void> =>
    new Promise((resolve) => (most >= n ? resolve() : waiters.push({ n, resolve })));
  return { io, ready, written, stop: () => controller.abort(), out: () => out, err: () => err };
}

async function recordFrom(url: string, protocol: 4 | 5): Promise<void> {
  const out = join(dir, `recorded-${protocol}.jsonl`);
  const r = recorderIo();
  const running = runRecordCommand(['--config', config, '--broker', url, '--protocol', String(protocol), '--out', out, '--with-truth'], r.io);
  await Promise.race([r.ready, running.then(() => Promise.reject(new Error(`record ended early: ${r.err()}`)))]);
  const client = await mqtt.connectAsync(url, { protocolVersion: protocol });
  const sent = [
    { topic: 'farm/tank-a/level', payload: '{"t":1767225600.0,"level_m":7.2,"seq":1}' },
    { topic: 'farm/tank-b/pressure', payload: '{"t":1767225600.1,"head_m":4.61,"seq":9}' },
    { topic: 'sim/truth/farm/tank-a', payload: '{"t":1767225600.0,"level":7.19}' },
    { topic: 'farm/tank-c/level', payload: Buffer.from([0xff, 0x00, 0x7b]) },
    { topic: 'yard/tug-01/gnss', payload: '{"not":"subscribed"}' },
  ];
  for (const m of sent) await client.publishAsync(m.topic, m.payload, { qos: 1 });
  await r.written(4);
  await client.endAsync();
  r.stop();
  expect(await running).toBe(0);

  const seen: { t: number; topic: string; payload: Buffer }[] = [];
  await readRecording(out, (t, topic, payload) => seen.push({ t, topic, payload: Buffer.from(payload) }));
  expect(seen.map((m) => m.topic)).toEqual(sent.slice(0, 4).map((m) => m.topic));
  expect(seen.map((m) => m.payload)).toEqual(sent.slice(0, 4).map((m) => Buffer.from(m.payload)));
  expect(seen.every((m, i) => i === 0 || m.t > seen[i - 1]!.t)).toBe(true);
  expect(r.out()).toMatch(/recorded 4 messages/);
  expect(r.out()).toMatch(/farm\/\+\/level\s+2\n/);
  expect(r.out()).toMatch(/sim\/truth\/#\s+1\n/);
}

describe('statecast record', () => {
  it('captures the messages published on the config topics and ground truth (embedded broker, MQTT 3.1.1)', async () => {
    const broker = await startEmbeddedBroker({ port: 0 });
    try {
      await recordFrom(broker.url, 4);
    } finally {
      await broker.stop();
    }
  });

  it('captures the messages published over MQTT 5 (Mosquitto)', async (ctx) => {
    const broker = await startMosquitto();
    if (broker === null) {
      console.warn('mosquitto is not installed: skipping the MQTT 5 record test');
      ctx.skip();
      return;
    }
    try {
      await recordFrom(broker.url, 5);
    } finally {
      await broker.stop();
    }
  });

  it('exits 1 with the broker named when nothing listens there', async () => {
    const r = recorderIo();
    const code = await runRecordCommand(['--config', config, '--broker', 'mqtt://127.0.0.1:1', '--protocol', '4', '--out', join(dir, 'none.jsonl')], r.io);
    expect(code).toBe(1);
    expect(r.err()).toContain('cannot connect to mqtt://127.0.0.1:1');
  });

  it('refuses a bad protocol version with exit 2', async () => {
    const r = recorderIo();
    expect(await runRecordCommand(['--config', config, '--out', join(dir, 'x.jsonl'), '--protocol', '3'], r.io)).toBe(2);
    expect(r.err()).toContain('--protocol must be 5 or 4');
  });
});
