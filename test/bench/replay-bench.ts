/**
 * Replay throughput: a 1,000,000-message vehicle-yard recording (measurements only, made once
 * by the simulator into a temp file), replayed end to end by `statecast replay` — reading and
 * parsing the file, the engine, and formatting every estimate line — with output to /dev/null.
 * Beside it, the same file through the bare Engine (read and handleMessage, no publisher,
 * nothing listening) as the floor the tool cannot beat, and through an Engine with a publisher
 * that takes every payload, as the daemon's engine does (its per-message cost before MQTT);
 * all per CPU second too, the figure that holds still on a shared machine. Prints figures;
 * never asserts on time.
 */
import { mkdtemp, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { createScenario } from '../../src/simulation/scenario.js';
import { generateRecording } from '../../src/simulation/simulation-runner.js';
import { recordingHeaderLine, recordingTextLine } from '../../src/tools/recording-format.js';
import { runReplayCommand } from '../../src/tools/replay-command.js';
import { readRecording } from '../../src/tools/recording-reader.js';
import { Engine } from '../../src/engine/engine.js';
import { parseConfig } from '../../src/config/load-config.js';
import type { ToolIo } from '../../src/tools/tool-io.js';

const MESSAGES = 1_000_000;
const START_S = 1_767_225_600;
/** The yard publishes 11 measurements per vehicle-second (10 Hz wheel, 1 Hz GNSS) for 12 vehicles. */
const MEASUREMENTS_PER_S = 132;

async function writeYardRecording(path: string): Promise<number> {
  const scenario = createScenario('vehicle-yard', { seed: 11, startTimeS: START_S });
  const messages = generateRecording(scenario, Math.ceil(MESSAGES / MEASUREMENTS_PER_S) + 10, { includeTruth: false }).slice(0, MESSAGES);
  const parts: string[] = [recordingHeaderLine(new Date(START_S * 1000).toISOString(), 'simulator:vehicle-yard')];
  let block = '';
  for (const m of messages) {
    block += recordingTextLine(Math.round(m.publishTimeS * 1000), m.topic, m.payload);
    if (block.length > 1 << 20) {
      parts.push(block);
      block = '';
    }
  }
  parts.push(block);
  await writeFile(path, parts);
  return messages.length;
}

/** Wall and CPU seconds of fn. */
async function timed(fn: () => Promise<void>): Promise<{ wallS: number; cpuS: number }> {
  const c0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  await fn();
  const c = process.cpuUsage(c0);
  return { wallS: Number(process.hrtime.bigint() - t0) / 1e9, cpuS: (c.user + c.system) / 1e6 };
}

/**
 * replay.msgs_per_s (end to end) and per CPU second, the bare engine's figures on the same
 * file, replay.ratio_to_engine, the publishing engine's per CPU second, replay.generate_s
 * (simulator + file) and replay.file_mb.
 */
export async function benchReplay(): Promise<Record<string, number>> {
  const dir = await mkdtemp(join(tmpdir(), 'statecast-replay-bench-'));
  try {
    const recording = join(dir, 'yard.jsonl');
    const config = join(dir, 'yard.json');
    await writeFile(config, JSON.stringify({ estimators: [yardEstimatorInput()] }));
    const g0 = process.hrtime.bigint();
    const count = await writeYardRecording(recording);
    const generateS = Number(process.hrtime.bigint() - g0) / 1e9;
    let summary = '';
    const io: ToolIo = {
      stdout: { write: (s: string) => (summary += s) },
      stderr: { write: () => true },
      isTTY: false,
      signal: new AbortController().signal,
      env: {},
    };
    const replay = await timed(async () => {
      const code = await runReplayCommand(['--config', config, '--in', recording, '--out', '/dev/null'], io);
      if (code !== 0) throw new Error(`replay exited ${code}`);
    });
    const parsed = parseConfig({ estimators: [yardEstimatorInput()] }, {});
    if (!parsed.ok) throw new Error('the yard estimator does not validate');
    const engine = new Engine(parsed.config.estimators, null);
    const bare = await timed(async () => {
      await readRecording(recording, (t, topic, payload) => engine.handleMessage(topic, payload, t));
    });
    let payloadBytes = 0;
    const publishing = new Engine(parsed.config.estimators, { publish: (_topic, payload) => { payloadBytes += payload.length; } });
    const withPublisher = await timed(async () => {
      await readRecording(recording, (t, topic, payload) => publishing.handleMessage(topic, payload, t));
    });
    if (payloadBytes === 0) throw new Error('replay bench: the publishing engine published nothing');
    return {
      'replay.msgs_per_s': count / replay.wallS,
      'replay.msgs_per_cpu_s': count / replay.cpuS,
      'replay.engine_only_msgs_per_s': count / bare.wallS,
      'replay.engine_only_msgs_per_cpu_s': count / bare.cpuS,
      'replay.ratio_to_engine': bare.cpuS / replay.cpuS,
      'replay.engine_publishing_msgs_per_cpu_s': count / withPublisher.cpuS,
      'replay.generate_s': generateS,
      'replay.file_mb': (await stat(recording)).size / 1e6,
    };
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
