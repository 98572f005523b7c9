import { mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { loadConfig } from '../../src/config/load-config.js';
import { Engine } from '../../src/engine/engine.js';
import type { ReplaySummary } from '../../src/tools/replay-summary.js';
import { runReplayCommand } from '../../src/tools/replay-command.js';
import { captureIo, scenarioMessages, writeDemoConfig, writeRecording, type FixtureMessage } from './recording-fixtures.js';

interface OutputLine {
  t: number;
  estimator: string;
  entity: string;
  kind: string;
  state: Record<string, number>;
  covariance: number[][];
  nis: { sensor: string; t: number; nis: number | null }[];
}

let dir = '';
let config = '';
let tankConfig = '';
let recording = '';
let tankRecording = '';
let messages: FixtureMessage[] = [];

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'statecast-replay-'));
  config = await writeDemoConfig(dir, ['tank-farm', 'vehicle-yard']);
  tankConfig = await writeDemoConfig(dir, ['tank-farm']);
  // A minute of both demo sites with ground truth, fixed seed (just over two read chunks).
  messages = scenarioMessages(['tank-farm', 'vehicle-yard'], 60, 3);
  recording = join(dir, 'both.jsonl');
  await writeRecording(recording, messages);
  tankRecording = join(dir, 'tanks.jsonl');
  await writeRecording(tankRecording, scenarioMessages(['tank-farm'], 180, 3));
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

async function replay(args: string[], onProgress?: () => void): Promise<{ code: number; out: string; err: string; abort: () => void }> {
  const c = captureIo({}, onProgress);
  const code = await runReplayCommand(args, c.io);
  return { code, out: c.out(), err: c.err(), abort: c.abort };
}

function lines(text: string): OutputLine[] {
  return text.split('\n').filter((l) => l !== '').map((l) => JSON.parse(l) as OutputLine);
}

// Whole replays on a shared two-core machine: generous time limits (nothing asserts on time).
vi.setConfig({ testTimeout: 180_000 });

describe('statecast replay', () => {
  it('writes identical bytes when the same recording is replayed twice', async () => {
    const a = join(dir, 'a.jsonl');
    const b = join(dir, 'b.jsonl');
    const first = await replay(['--config', config, '--in', recording, '--out', a, '--smooth']);
    const second = await replay(['--config', config, '--in', recording, '--out', b, '--smooth']);
    expect([first.code, second.code]).toEqual([0, 0]);
    const [x, y] = [await readFile(a), await readFile(b)];
    expect(x.length).toBeGreaterThan(1000);
    expect(x.equals(y)).toBe(true);
    expect(first.out).toBe(second.out);
  });

  it('counts accepted and rejected measurements per sensor as a direct engine run does', async () => {
    const loaded = loadConfig(config, {});
    if (!loaded.ok) throw new Error('config');
    const engine = new Engine(loaded.config.estimators, { publish: () => undefined });
    const accepted = new Map<string, number>();
    const rejected = new Map<string, number>();
    engine.events.on('measurement:accepted', (e) => accepted.set(`${e.estimator}/${e.sensor}`, (accepted.get(`${e.estimator}/${e.sensor}`) ?? 0) + 1));
    engine.events.on('measurement:rejected', (e) => {
      const key = `${e.estimator}/${e.sensor}/${e.reason}`;
      rejected.set(key, (rejected.get(key) ?? 0) + 1);
    });
    for (const m of messages) if (!m.topic.startsWith('sim/truth/')) engine.handleMessage(m.topic, Buffer.from(m.payload), m.tMs);

    const run = await replay(['--config', config, '--in', recording, '--out', join(dir, 'counts.jsonl'), '--json']);
    expect(run.code).toBe(0);
    const summary = JSON.parse(run.out) as ReplaySummary;
    expect(summary.messages).toBe(messages.length);
    expect(summary.truthMessages).toBe(messages.filter((m) => m.topic.startsWith('sim/truth/')).length);
    const seenAccepted = new Map<string, number>();
    const seenRejected = new Map<string, number>();
    for (const e of summary.estimators) {
      for (const s of e.sensors) {
        seenAccepted.set(`${e.estimator}/${s.sensor}`, s.accepted);
        for (const [reason, n] of Object.entries(s.rejected)) seenRejected.set(`${e.estimator}/${s.sensor}/${reason}`, n);
      }
    }
    expect(seenAccepted).toEqual(accepted);
    expect(seenRejected).toEqual(rejected);
    expect([...rejected.values()].reduce((a, b) => a + b, 0)).toBeGreaterThan(0);
  });

  it('writes one filtered line per accepted measurement, each listing that measurement', async () => {
    const out = join(dir, 'filtered.jsonl');
    const run = await replay(['--config', config, '--in', recording, '--out', out, '--json']);
    const summary = JSON.parse(run.out) as ReplaySummary;
    const filtered = lines(await readFile(out, 'utf8')).filter((l) => l.kind === 'filtered');
    const accepted = summary.estimators.flatMap((e) => e.sensors).reduce((sum, s) => sum + s.accepted, 0);
    expect(filtered.length).toBe(accepted);
    expect(filtered.every((l) => l.nis.length === 1 && l.covariance.length === Object.keys(l.state).length)).toBe(true);
  });

  it('scores the correctly modelled tank farm as consistent against ground truth', async () => {
    const run = await replay(['--config', tankConfig, '--in', tankRecording, '--out', join(dir, 'tanks-out.jsonl'), '--json']);
    const truth = (JSON.parse(run.out) as ReplaySummary).estimators[0]!.truth!;
    expect(truth.samples).toBeGreaterThan(400);
    expect(truth.shareBelowQuantile).toBeGreaterThanOrEqual(0.9);
    expect(Object.keys(truth.rmse)).toEqual(['level', 'level_rate', 'pressure_bias']);
  });

  it('writes smoothed estimates whose σ do not exceed the filtered σ at the same time', async () => {
    const out = join(dir, 'smoothed.jsonl');
    expect((await replay(['--config', tankConfig, '--in', tankRecording, '--out', out, '--smooth'])).code).toBe(0);
    const all = lines(await readFile(out, 'utf8'));
    const sigma = (l: OutputLine): number[] => l.covariance.map((row, i) => Math.sqrt(row[i]!));
    // Per entity and time: the largest smoothed σ against the smallest filtered σ, per component
    // (several updates can share a time stamp; the last of them has the smallest filtered σ).
    const minFiltered = new Map<string, number[]>();
    for (const l of all.filter((x) => x.kind === 'filtered')) {
      const key = `${l.entity}@${l.t}`;
      const s = sigma(l);
      minFiltered.set(key, (minFiltered.get(key) ?? s).map((v, i) => Math.min(v, s[i]!)));
    }
    const smoothed = all.filter((l) => l.kind === 'smoothed');
    expect(smoothed.length).toBeGreaterThan(1000);
    let compared = 0;
    for (const l of smoothed) {
      const filtered = minFiltered.get(`${l.entity}@${l.t}`);
      if (filtered === undefined) continue;
      compared += 1;
      // Nine significant digits in the output: allow that rounding.
      sigma(l).forEach((s, i) => expect(s).toBeLessThanOrEqual(filtered[i]! * (1 + 1e-8)));
    }
    expect(compared).toBeGreaterThan(smoothed.length * 0.9);
  });

  it('names the line of a malformed recording and exits 2', async () => {
    const bad = join(dir, 'bad.jsonl');
    const text = (await readFile(tankRecording, 'utf8')).split('\n');
    text[16] = '{"t":1767225601000,"topic":"farm/tank-a/level"}';
    await writeFile(bad, text.join('\n'));
    const run = await replay(['--config', tankConfig, '--in', bad, '--out', join(dir, 'bad-out.jsonl')]);
    expect(run.code).toBe(2);
    expect(run.err).toContain(`${bad}:17: expected an object with t, topic and payload`);
  });

  it('stops when aborted, keeps the estimates made so far and exits 130', async () => {
    const full = lines(await readFile(join(dir, 'filtered.jsonl'), 'utf8')).length;
    const out = join(dir, 'partial.jsonl');
    let abort = (): void => undefined;
    const c = captureIo({}, () => abort());
    abort = c.abort;
    const code = await runReplayCommand(['--config', config, '--in', recording, '--out', out], c.io);
    expect(code).toBe(130);
    const partial = lines(await readFile(out, 'utf8'));
    expect(partial.length).toBeGreaterThan(0);
    expect(partial.length).toBeLessThan(full);
    expect(c.out()).toMatch(/^interrupted after [\d,]+ messages/);
  });

  it('refuses an unknown option with exit 2 and a pointer to --help', async () => {
    const run = await replay(['--config', config, '--in', recording, '--out', join(dir, 'x.jsonl'), '--fast']);
    expect(run.code).toBe(2);
    expect(run.err).toContain('unknown option --fast');
    expect(run.err).toContain('statecast replay --help');
  });

  it('prints its usage for --help', async () => {
    const run = await replay(['--help']);
    expect(run.code).toBe(0);
    expect(run.out).toContain('usage: statecast replay --config FILE --in REC.jsonl');
    expect(run.out).toContain('advisory');
  });
});
