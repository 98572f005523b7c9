#!/usr/bin/env node
// Launcher: the compiled build when present (production images), else the TypeScript sources
// through tsx (a fresh clone after `npm ci`), so both paths run the same CLI.
import { existsSync } from 'node:fs';

const compiled = new URL('../dist/cli.js', import.meta.url);
if (existsSync(compiled)) {
  await import(compiled.href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import(new URL('../src/cli.ts', import.meta.url).href);
}
