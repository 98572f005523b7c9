import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { runCvFilter } from './fixtures/cv-filter-run.js';

const FIXTURE = fileURLToPath(new URL('./fixtures/cv-filter-run.ts', import.meta.url));
const REPO_ROOT = fileURLToPath(new URL('../../..', import.meta.url));

/** The fixture's result in a Node that refuses code generation from strings. */
function runWithoutCodeGeneration(): ReturnType<typeof runCvFilter> {
  const out = execFileSync(process.execPath, ['--disallow-code-generation-from-strings', '--import', 'tsx', FIXTURE], {
    cwd: REPO_ROOT, encoding: 'utf8', timeout: 60_000,
  });
  return JSON.parse(out) as ReturnType<typeof runCvFilter>;
}

describe('generated kernels on a host that forbids code generation', () => {
  it('falls back to the loop kernels and gives the same filter run', { timeout: 90_000 }, () => {
    const locked = runWithoutCodeGeneration();
    const loops = runCvFilter(false);
    const generated = runCvFilter(true);
    // The run includes gate refusals (the 60 m jumps), so the verdicts are not all alike.
    expect(locked.verdicts).toContain('gate');
    expect(locked.verdicts).toEqual(loops.verdicts);
    expect(generated.verdicts).toEqual(loops.verdicts);
    for (let i = 0; i < 4; i++) expect(locked.x[i]).toBeCloseTo(loops.x[i]!, 12);
    for (let i = 0; i < 16; i++) {
      expect(locked.P[i]).toBeCloseTo(loops.P[i]!, 12);
      expect(generated.P[i]).toBeCloseTo(loops.P[i]!, 9);
    }
  });
});
