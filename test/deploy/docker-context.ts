/**
 * The Docker build context outside Docker: the checkout's files minus what `.dockerignore`
 * excludes, copied to a folder the recipe test builds from. Matching follows Docker's rules for
 * the patterns we use: paths relative to the context root, `*` and `?` within one path segment,
 * `**` across segments, and a pattern that matches a folder excludes everything in it. `!`
 * re-includes are refused: the copy skips an ignored folder whole.
 */
import { copyFileSync, mkdirSync, readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';

/** Compiles `.dockerignore` text into a predicate on context-relative paths (`src/app.ts`). */
export function dockerignoreMatcher(text: string): (relativePath: string) => boolean {
  const rules: RegExp[] = [];
  for (const raw of text.split(/\r?\n/)) {
    const line = raw.trim();
    if (line === '' || line.startsWith('#')) continue;
    // Re-includes would stop copyBuildContext from skipping ignored folders whole.
    if (line.startsWith('!')) throw new Error(`.dockerignore: "${line}": re-include patterns are not supported here`);
    rules.push(globRegex(line.replace(/^\/+/, '').replace(/\/+$/, '')));
  }
  return (relativePath) => {
    // A folder pattern excludes the folder's contents: test the path and each of its parents.
    const parts = relativePath.split('/');
    const prefixes = parts.map((_, i) => parts.slice(0, i + 1).join('/'));
    return rules.some((rule) => prefixes.some((prefix) => rule.test(prefix)));
  };
}

function globRegex(pattern: string): RegExp {
  let source = '';
  for (let i = 0; i < pattern.length; i++) {
    const c = pattern[i]!;
    if (c === '*' && pattern[i + 1] === '*') {
      const slash = pattern[i + 2] === '/';
      source += slash ? '(?:.*/)?' : '.*';
      i += slash ? 2 : 1;
    } else if (c === '*') source += '[^/]*';
    else if (c === '?') source += '[^/]';
    else source += c.replace(/[.+^${}()|[\]\\]/g, '\\$&');
  }
  return new RegExp(`^${source}$`);
}

/**
 * Copies the files of `root` that `ignored` lets through into `dest`, and returns their
 * context-relative paths. Ignored folders are not descended into. A file that vanishes mid-copy (another process's temporary file) is skipped.
 */
export function copyBuildContext(root: string, dest: string, ignored: (relativePath: string) => boolean): string[] {
  const copied: string[] = [];
  const walk = (relative: string): void => {
    const entries = readdirSync(join(root, relative), { withFileTypes: true });
    for (const entry of entries) {
      const path = relative === '' ? entry.name : `${relative}/${entry.name}`;
      if (ignored(path)) continue;
      if (entry.isDirectory()) walk(path);
      else if (entry.isFile()) {
        try {
          mkdirSync(dirname(join(dest, path)), { recursive: true });
          copyFileSync(join(root, path), join(dest, path));
          copied.push(path);
        } catch (err) {
          if ((err as NodeJS.ErrnoException).code !== 'ENOENT') throw err;
        }
      }
    }
  };
  walk('');
  return copied;
}
