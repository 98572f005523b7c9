import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { recordingHeaderLine, recordingMessageLine, recordingTextLine } from '../../src/tools/recording-format.js';
import { RecordingLineParser } from '../../src/tools/recording-line-parser.js';
import { RecordingFormatError, readRecording } from '../../src/tools/recording-reader.js';
import { RecordingWriter, recordingPartPath } from '../../src/tools/recording-writer.js';

const HEADER = recordingHeaderLine('2026-01-01T00:00:00.000Z', 'test');

let dir = '';
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'statecast-recording-'));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

interface Seen { t: number; topic: string; payload: Buffer }

async function readAll(path: string): Promise<Seen[]> {
  const seen: Seen[] = [];
  await readRecording(path, (t, topic, payload) => seen.push({ t, topic, payload: Buffer.from(payload) }));
  return seen;
}

function parseLine(line: string): { problem: string | null; parser: RecordingLineParser } {
  const parser = new RecordingLineParser();
  const buf = Buffer.from(line.replace(/\n$/, ''));
  return { problem: parser.parse(buf, 0, buf.length), parser };
}

describe('recording format', () => {
  it('round-trips text payloads with quotes, backslashes, control characters and non-ASCII text', () => {
    const payload = '{"a":"x\\"y","b":"\u00e9\u4e2d\t\n\u0001"}';
    const { problem, parser } = parseLine(recordingTextLine(1767225600123, 'farm/tank-a/level', payload));
    expect(problem).toBeNull();
    expect(parser.tMs).toBe(1767225600123);
    expect(parser.topic).toBe('farm/tank-a/level');
    expect(Buffer.from(parser.payload).toString('utf8')).toBe(payload);
  });

  it('writes bytes that are not UTF-8 as base64 and reads them back unchanged', () => {
    const bytes = new Uint8Array([0xff, 0xfe, 0x00, 0x41]);
    const line = recordingMessageLine(5, 'yard/tug-01/gnss', bytes);
    expect(JSON.parse(line)).toEqual({ t: 5, topic: 'yard/tug-01/gnss', payloadBase64: '//4AQQ==' });
    const { problem, parser } = parseLine(line);
    expect(problem).toBeNull();
    expect([...parser.payload]).toEqual([...bytes]);
  });

  it('reads lines written with other key orders and whitespace', () => {
    const { problem, parser } = parseLine('{ "payload": "42", "topic": "lab/x/temp", "t": 7.5 }');
    expect(problem).toBeNull();
    expect(parser.tMs).toBe(7.5);
    expect(Buffer.from(parser.payload).toString()).toBe('42');
  });

  it('refuses a line with both payload and payloadBase64', () => {
    expect(parseLine('{"t":1,"topic":"a","payload":"x","payloadBase64":"eA=="}').problem).toMatch(/not both/);
  });

  it('reports the line number of a malformed line', async () => {
    const path = join(dir, 'bad.jsonl');
    const good = recordingTextLine(1, 'farm/tank-a/level', '{"level_m":1}');
    await writeFile(path, HEADER + good + good + '{"t":3,"topic":"farm/tank-a/level"}\n' + good);
    const error = await readAll(path).then(() => null, (e: unknown) => e);
    expect(error).toBeInstanceOf(RecordingFormatError);
    expect((error as Error).message).toBe(`${path}:4: expected an object with t, topic and payload`);
  });

  it('refuses a file whose first line is not a statecast header', async () => {
    const path = join(dir, 'no-header.jsonl');
    await writeFile(path, recordingTextLine(1, 'a', 'b'));
    await expect(readAll(path)).rejects.toThrow(`${path}:1: not a statecast recording`);
  });

  it('reads every message of a file larger than one read chunk, with a last line lacking its newline', async () => {
    const path = join(dir, 'big.jsonl');
    const lines = Array.from({ length: 30_000 }, (_, i) => recordingTextLine(i, `yard/tug-${i % 12}/wheel`, `{"speed_mps":${i},"pad":"${'x'.repeat(40)}"}`));
    await writeFile(path, HEADER + lines.join('').slice(0, -1));
    const seen = await readAll(path);
    expect(seen.length).toBe(30_000);
    expect(seen[29_999]!.payload.toString()).toContain('"speed_mps":29999');
    expect(seen.every((m, i) => m.t === i)).toBe(true);
  });

  it('rotates into numbered parts that each start with a header', async () => {
    const path = join(dir, 'rotated.jsonl');
    const writer = await RecordingWriter.open(path, { startedAt: '2026-01-01T00:00:00.000Z', source: 'test', maxBytes: 400 });
    for (let i = 0; i < 20; i++) writer.write(recordingTextLine(i, 'farm/tank-b/level', `{"level_m":${i}}`));
    await writer.close();
    expect(writer.files.length).toBeGreaterThan(2);
    expect(writer.files[1]).toBe(recordingPartPath(path, 1));
    const all: Seen[] = [];
    for (const [k, file] of writer.files.entries()) {
      const text = await readFile(file, 'utf8');
      expect(Buffer.byteLength(text)).toBeLessThanOrEqual(400);
      expect(JSON.parse(text.split('\n')[0]!).part).toBe(k === 0 ? undefined : k);
      all.push(...(await readAll(file)));
    }
    expect(all.map((m) => m.t)).toEqual(Array.from({ length: 20 }, (_, i) => i));
  });
});
