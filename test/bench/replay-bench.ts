/**
 * Replay throughput: a 1,000,000-message vehicle-yard recording (measurements only, made once
 * by the simulator into a temp file), replayed end to end by `statecast replay` — reading and
 * parsing the file, the engine, and formatting every estimate line — with output to /dev/null.
 * Prints figures; never asserts on time.
 */
import { mkdtemp, rm, stat, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { createScenario } from '../../src/simulation/scenario.js';
import { generateRecording } from '../../src/simulation/simulation-runner.js';
import { recordingHeaderLine, recordingTextLine } from '../../src/tools/recording-format.js';
import { runReplayCommand } from '../../src/tools/replay-command.js';
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

/** replay.msgs_per_s (end to end), replay.generate_s (simulator + file), replay.file_mb. */
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
    const r0 = process.hrtime.bigint();
    const code = await runReplayCommand(['--config', config, '--in', recording, '--out', '/dev/null'], io);
    const replayS = Number(process.hrtime.bigint() - r0) / 1e9;
    if (code !== 0) throw new Error(`replay exited ${code}`);
    return {
      'replay.msgs_per_s': count / replayS,
      'replay.generate_s': generateS,
      'replay.file_mb': (await stat(recording)).size / 1e6,
    };
  } finally {
    await rm(dir, { recursive: true, force: true });
  }
}
