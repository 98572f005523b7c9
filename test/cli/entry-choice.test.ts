import { mkdirSync, mkdtempSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { chooseEntry } from '../../bin/entry-choice.js';

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

/** A package folder with the given files, each at the given modification time (s). */
function packageFolder(files: Record<string, number>): string {
  const root = mkdtempSync(join(tmpdir(), 'statecast-entry-'));
  dirs.push(root);
  for (const [path, mtimeS] of Object.entries(files)) {
    mkdirSync(join(root, path, '..'), { recursive: true });
    writeFileSync(join(root, path), '');
    utimesSync(join(root, path), mtimeS, mtimeS);
  }
  return root;
}

describe('the launcher\'s choice of entry', () => {
  it('runs dist/ where there are no sources (the production image)', () => {
    expect(chooseEntry(packageFolder({ 'dist/cli.js': 1000 }))).toEqual({ entry: 'dist', staleDist: false });
  });

  it('runs the sources where there is no build (a fresh clone)', () => {
    expect(chooseEntry(packageFolder({ 'src/cli.ts': 1000 }))).toEqual({ entry: 'sources', staleDist: false });
  });

  it('runs dist/ when it is at least as new as every source file', () => {
    const root = packageFolder({ 'src/cli.ts': 1000, 'src/estimation/filters/kalman-update.ts': 1500, 'dist/cli.js': 1500 });
    expect(chooseEntry(root)).toEqual({ entry: 'dist', staleDist: false });
  });

  it('runs the sources, and says the build is stale, when a source file changed after the build', () => {
    const root = packageFolder({ 'src/cli.ts': 1000, 'src/estimation/filters/kalman-update.ts': 2000, 'dist/cli.js': 1500 });
    expect(chooseEntry(root)).toEqual({ entry: 'sources', staleDist: true });
  });
});
