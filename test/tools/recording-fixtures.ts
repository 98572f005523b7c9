/**
 * Test recordings made by the built-in simulator (invented tank-farm and vehicle-yard demo
 * data, fixed seeds) and the matching config files.
 */
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { tanksEstimatorInput, yardEstimatorInput } from '../../src/config/default-demo-config.js';
import { createScenario, type ScenarioName } from '../../src/simulation/scenario.js';
import { generateRecording } from '../../src/simulation/simulation-runner.js';
import { recordingHeaderLine, recordingTextLine } from '../../src/tools/recording-format.js';

/** 2026-01-01T00:00:00Z, the demo recordings' start. */
export const START_S = 1_767_225_600;

/** A recorded message as the fixtures make them. */
export interface FixtureMessage {
  readonly tMs: number;
  readonly topic: string;
  readonly payload: string;
}

/**
 * The messages of several scenarios run side by side for `durationS` (with ground truth),
 * merged in arrival order, as a broker would have delivered them to `record`.
 */
export function scenarioMessages(scenarios: readonly ScenarioName[], durationS: number, seed = 1): FixtureMessage[] {
  const all = scenarios.flatMap((name, k) =>
    generateRecording(createScenario(name, { seed, startTimeS: START_S }), durationS).map((m, i) => ({
      tMs: Math.round(m.publishTimeS * 1000), topic: m.topic, payload: m.payload, k, i,
    })),
  );
  all.sort((a, b) => a.tMs - b.tMs || a.k - b.k || a.i - b.i);
  return all.map(({ tMs, topic, payload }) => ({ tMs, topic, payload }));
}

/** Writes messages as a recording file. */
export async function writeRecording(path: string, messages: readonly FixtureMessage[], source = 'simulator'): Promise<void> {
  const parts = [recordingHeaderLine(new Date(START_S * 1000).toISOString(), source)];
  for (const m of messages) parts.push(recordingTextLine(m.tMs, m.topic, m.payload));
  await writeFile(path, parts.join(''));
}

/** Writes `durationS` of the scenarios (with ground truth) as a recording; returns the message count. */
export async function writeScenarioRecording(path: string, scenarios: ScenarioName | readonly ScenarioName[], durationS: number, seed = 1): Promise<number> {
  const list = typeof scenarios === 'string' ? [scenarios] : scenarios;
  const messages = scenarioMessages(list, durationS, seed);
  await writeRecording(path, messages, `simulator:${list.join('+')}`);
  return messages.length;
}

/** Writes a config file with the demo estimators for the given scenarios; returns its path. */
export async function writeDemoConfig(dir: string, scenarios: readonly ScenarioName[]): Promise<string> {
  const estimators = scenarios.map((s) => (s === 'tank-farm' ? tanksEstimatorInput() : yardEstimatorInput()));
  const path = join(dir, `config-${scenarios.join('-')}.json`);
  await writeFile(path, JSON.stringify({ estimators }, null, 2));
  return path;
}

/**
 * A ToolIo writing into strings, with an AbortController to stop the command. With
 * `onProgress`, stderr claims to be a terminal and the fake clock moves a second per read, so
 * the progress bar draws after every input chunk and calls onProgress each time.
 */
export function captureIo(env: Record<string, string> = {}, onProgress?: () => void): {
  io: import('../../src/tools/tool-io.js').ToolIo;
  out: () => string;
  err: () => string;
  abort: () => void;
} {
  let out = '';
  let err = '';
  const controller = new AbortController();
  let clockMs = 0;
  return {
    io: {
      stdout: { write: (s: string) => (out += s) },
      stderr: {
        write: (s: string) => {
          err += s;
          if (onProgress !== undefined && s.includes('[')) onProgress();
        },
      },
      isTTY: onProgress !== undefined,
      signal: controller.signal,
      env,
      nowMs: () => (clockMs += 1000),
    },
    out: () => out,
    err: () => err,
    abort: () => controller.abort(),
  };
}
