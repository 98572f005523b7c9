import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseConfig } from '../../src/config/load-config.js';
import type { ConfigIssue } from '../../src/config/config-error.js';

/** A small valid estimator as written in a file; tests break one field at a time. */
export function labEstimator(name = 'lab'): Record<string, unknown> {
  return {
    name,
    model: { type: 'random-walk', states: ['temp'], q: 0.001 },
    sensors: {
      probe: {
        topic: 'lab/{probe}/temp',
        decode: { format: 'number' },
        measurement: { type: 'linear', reads: { temp: 1 }, sigma: 0.2 },
      },
    },
  };
}

/** The issues of parsing `raw` with no environment; fails the test when it parses. */
export function issuesOf(raw: unknown, env: Record<string, string | undefined> = {}): readonly ConfigIssue[] {
  const result = parseConfig(raw, env);
  if (result.ok) throw new Error('expected the configuration to be rejected');
  return result.issues;
}

/** Writes `text` to a fresh temporary file named `name` and returns its path. */
export function tempFile(name: string, text: string): string {
  const dir = mkdtempSync(join(tmpdir(), 'statecast-config-'));
  const path = join(dir, name);
  writeFileSync(path, text);
  return path;
}
