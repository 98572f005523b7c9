#!/usr/bin/env node
// postbuild: copies the dashboard's static files from src/dashboard/ to dist/dashboard/.
// The compiled app serves DASHBOARD_DIR, which resolves beside dist/app.js; tsc emits only the
// dashboard's TypeScript, so the page, styles, scripts and icon are copied here. TypeScript
// sources and declaration files (*.ts) are left out: tsc has already emitted what they hold.
import { copyFileSync, mkdirSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('..', import.meta.url));
const from = join(root, 'src', 'dashboard');
const to = join(root, 'dist', 'dashboard');

/** Copies `src` into `dest` recursively, skipping *.ts; returns the number of files copied. */
function copyTree(src, dest) {
  mkdirSync(dest, { recursive: true });
  let copied = 0;
  for (const entry of readdirSync(src, { withFileTypes: true })) {
    const source = join(src, entry.name);
    if (entry.isDirectory()) copied += copyTree(source, join(dest, entry.name));
    else if (entry.isFile() && !entry.name.endsWith('.ts')) {
      copyFileSync(source, join(dest, entry.name));
      copied += 1;
    }
  }
  return copied;
}

const copied = copyTree(from, to);
process.stdout.write(`copied ${copied} dashboard files to dist/dashboard/\n`);
