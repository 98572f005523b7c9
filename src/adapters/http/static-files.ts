/**
 * Serves the dashboard's folder: `/` and any folder path give its index.html, files get a content
 * type from their extension, and nothing else is exposed: only the web asset types listed in
 * STATIC_CONTENT_TYPES are sent (the folder also holds TypeScript helpers and type declarations
 * for the build, which are not for browsers). There is no directory listing, dot files
 * stay hidden, a `..` segment (plain or percent-encoded) is refused with 400 BAD_PATH, and a
 * symbolic link that points out of the folder is treated as absent.
 */
import { createReadStream } from 'node:fs';
import { realpath, stat } from 'node:fs/promises';
import type { IncomingMessage, ServerResponse } from 'node:http';
import { extname, join, resolve, sep } from 'node:path';
import { READ_METHODS, type HttpRoute } from './http-route.js';
import { sendError } from './http-responses.js';

/** Content types by file extension; a file of any other type in the folder is not served. */
export const STATIC_CONTENT_TYPES: Readonly<Record<string, string>> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.txt': 'text/plain; charset=utf-8',
  '.woff2': 'font/woff2',
  '.webmanifest': 'application/manifest+json',
};

const INDEX_FILE = 'index.html';

/** Returns the route that serves `rootDir` for the decoded path `segments`. */
export function staticFileRoute(rootDir: string, segments: readonly string[]): HttpRoute {
  return { allow: READ_METHODS, handle: (req, res) => serveStatic(req, res, resolve(rootDir), segments) };
}

/** Returns the route that serves one named file (e.g. a dependency's asset from node_modules). */
export function singleFileRoute(filePath: string): HttpRoute {
  return {
    allow: READ_METHODS,
    handle: async (req, res) => {
      let sizeBytes: number;
      try {
        const info = await stat(filePath);
        if (!info.isFile()) throw new Error('not a file');
        sizeBytes = info.size;
      } catch {
        sendError(res, 'NOT_FOUND');
        return;
      }
      await sendFile(req, res, { path: filePath, sizeBytes });
    },
  };
}

async function serveStatic(
  req: IncomingMessage, res: ServerResponse, root: string, segments: readonly string[],
): Promise<void> {
  const verdict = checkSegments(segments);
  if (verdict !== 'ok') {
    sendError(res, verdict);
    return;
  }
  const file = await locate(root, segments);
  if (file === null) {
    sendError(res, 'NOT_FOUND');
    return;
  }
  await sendFile(req, res, file);
}

async function sendFile(req: IncomingMessage, res: ServerResponse, file: { path: string; sizeBytes: number }): Promise<void> {
  res.writeHead(200, {
    'Content-Type': STATIC_CONTENT_TYPES[extname(file.path).toLowerCase()] ?? 'application/octet-stream',
    'Content-Length': file.sizeBytes,
    // The dashboard changes with the daemon's version; revalidate rather than serve a stale copy.
    'Cache-Control': 'no-cache',
  });
  if (req.method === 'HEAD') {
    res.end();
    return;
  }
  await new Promise<void>((done) => {
    const stream = createReadStream(file.path);
    stream.on('error', () => {
      res.destroy(); // headers are out: cutting the connection is the only honest signal left
      done();
    });
    res.on('close', () => {
      stream.destroy();
      done();
    });
    stream.pipe(res);
  });
}

/**
 * Refuses segments that could climb out of the folder or name something that is not a plain
 * file name. The checks run on decoded segments, so `%2e%2e` and `..%2f` are caught too.
 */
function checkSegments(segments: readonly string[]): 'ok' | 'BAD_PATH' | 'NOT_FOUND' {
  for (let i = 0; i < segments.length; i++) {
    const s = segments[i]!;
    if (s === '..' || s === '.' || /[/\\\0]/.test(s)) return 'BAD_PATH';
    if (s.startsWith('.')) return 'NOT_FOUND'; // dot files (.env, .git) are never served
    if (s === '' && i !== segments.length - 1) return 'NOT_FOUND'; // `a//b`
  }
  return 'ok';
}

/** The file to send (a folder's index.html for a folder), or null if absent or outside the root. */
async function locate(root: string, segments: readonly string[]): Promise<{ path: string; sizeBytes: number } | null> {
  try {
    let candidate = join(root, ...segments);
    if ((await stat(candidate)).isDirectory()) candidate = join(candidate, INDEX_FILE);
    // Resolve links on both sides, then insist the file lies inside the root.
    const [realRoot, realFile] = await Promise.all([realpath(root), realpath(candidate)]);
    if (!realFile.startsWith(realRoot.endsWith(sep) ? realRoot : realRoot + sep)) return null;
    if (STATIC_CONTENT_TYPES[extname(realFile).toLowerCase()] === undefined) return null;
    const info = await stat(realFile);
    return info.isFile() ? { path: realFile, sizeBytes: info.size } : null;
  } catch {
    return null; // ENOENT, ENOTDIR, EACCES: all look the same from outside
  }
}
