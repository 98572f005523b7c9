// Which code the launcher runs: the compiled build in dist/ when it is at least as new as every
// file in src/ (or src/ is absent, as in the production image), else the TypeScript sources. A
// build left behind in a checkout would otherwise shadow every later edit without a word.
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

/** Newest modification time (ms) of any file below dir. */
function newestMtimeMs(dir) {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const path = join(dir, entry.name);
    const t = entry.isDirectory() ? newestMtimeMs(path) : statSync(path).mtimeMs;
    if (t > newest) newest = t;
  }
  return newest;
}

/**
 * 'dist' or 'sources' for the package folder `root`, and whether a dist/ build was passed over
 * because src/ changed after it.
 */
export function chooseEntry(root) {
  const compiled = join(root, 'dist', 'cli.js');
  const sources = join(root, 'src');
  const hasDist = existsSync(compiled);
  if (!existsSync(sources)) return { entry: 'dist', staleDist: false };
  if (hasDist && statSync(compiled).mtimeMs >= newestMtimeMs(sources)) return { entry: 'dist', staleDist: false };
  return { entry: 'sources', staleDist: hasDist };
}
