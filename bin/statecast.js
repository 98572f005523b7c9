#!/usr/bin/env node
// Launcher: the compiled build when it is current (production images have no src/), else the
// TypeScript sources through tsx (a fresh clone after `npm ci`), so both paths run the same CLI.
import { fileURLToPath } from 'node:url';
import { chooseEntry } from './entry-choice.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const { entry, staleDist } = chooseEntry(root);
if (entry === 'dist') {
  await import(new URL('../dist/cli.js', import.meta.url).href);
} else {
  if (staleDist) process.stderr.write('statecast: dist/ is older than src/, so the sources run; `npm run build` refreshes it\n');
  const { register } = await import('tsx/esm/api');
  register();
  await import(new URL('../src/cli.ts', import.meta.url).href);
}
