import { mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { rawRequest, startAdmin, stopAllAdmins } from './http-fixture.js';

const SECRET = 'tank-farm-secret-outside-the-dashboard';
let dir = '';
let staticDir = '';

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'statecast-static-'));
  staticDir = join(dir, 'dashboard');
  mkdirSync(join(staticDir, 'assets'), { recursive: true });
  mkdirSync(join(staticDir, 'empty'));
  writeFileSync(join(staticDir, 'index.html'), '<!doctype html><title>tank farm</title>');
  writeFileSync(join(staticDir, 'assets', 'app.js'), 'export const yard = "tug-01";');
  writeFileSync(join(staticDir, 'assets', 'style.css'), 'body { margin: 0 }');
  writeFileSync(join(staticDir, 'assets', 'blob.bin'), 'raw');
  writeFileSync(join(staticDir, 'assets', 'helper.ts'), 'export const yard = "tug-01";');
  writeFileSync(join(staticDir, 'assets', 'app.d.ts'), 'export declare const yard: string;');
  writeFileSync(join(staticDir, '.env'), SECRET);
  writeFileSync(join(dir, 'secret.txt'), SECRET);
  symlinkSync(join(dir, 'secret.txt'), join(staticDir, 'linked.txt'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(stopAllAdmins);

describe('static files', () => {
  it('serves index.html at / as HTML', async () => {
    const { base } = await startAdmin({ staticDir });
    const res = await fetch(`${base}/`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('text/html; charset=utf-8');
    expect(await res.text()).toContain('tank farm');
  });

  it.each([
    ['/assets/app.js', 'text/javascript; charset=utf-8'],
    ['/assets/style.css', 'text/css; charset=utf-8'],
  ])('serves %s as %s', async (path, type) => {
    const { base } = await startAdmin({ staticDir });
    const res = await fetch(`${base}${path}`);
    await res.arrayBuffer();
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe(type);
  });

  it('serves no file of a type that is not a web asset (build helpers, type declarations, blobs)', async () => {
    const { base } = await startAdmin({ staticDir });
    const statuses = await Promise.all(['/assets/helper.ts', '/assets/app.d.ts', '/assets/blob.bin'].map((p) => rawRequest(base, p)));
    expect(statuses.map((r) => r.status)).toEqual([404, 404, 404]);
  });

  it('lists no folder without an index.html', async () => {
    const { base } = await startAdmin({ staticDir });
    const statuses = await Promise.all(['/empty/', '/assets'].map((p) => rawRequest(base, p)));
    expect(statuses.map((r) => r.status)).toEqual([404, 404]);
  });

  it.each([
    '/../secret.txt',
    '/assets/../../secret.txt',
    '/%2e%2e/secret.txt',
    '/%2E%2E/secret.txt',
    '/..%2fsecret.txt',
    '/assets%2f..%2f..%2fsecret.txt',
    '/..%5csecret.txt',
  ])('refuses the traversal %s', async (path) => {
    const { base } = await startAdmin({ staticDir });
    const reply = await rawRequest(base, path);
    expect(reply.status).toBe(400);
    expect(reply.body).not.toContain(SECRET);
    expect(JSON.parse(reply.body)).toMatchObject({ error: { code: 'BAD_PATH' } });
  });

  it('refuses /../package.json of the checkout', async () => {
    const { base } = await startAdmin({ staticDir: process.cwd() });
    const reply = await rawRequest(base, '/../package.json');
    expect(reply.status).toBe(400);
    expect(reply.body).not.toContain('"devDependencies"');
  });

  it('hides dot files', async () => {
    const { base } = await startAdmin({ staticDir });
    const reply = await rawRequest(base, '/.env');
    expect(reply.status).toBe(404);
    expect(reply.body).not.toContain(SECRET);
  });

  it('treats a link that points out of the folder as absent', async () => {
    const { base } = await startAdmin({ staticDir });
    const reply = await rawRequest(base, '/linked.txt');
    expect(reply.status).toBe(404);
    expect(reply.body).not.toContain(SECRET);
  });

  it('refuses writes to static paths with 405', async () => {
    const { base } = await startAdmin({ staticDir });
    const reply = await rawRequest(base, '/index.html', { method: 'PUT' }, 'x');
    expect(reply.status).toBe(405);
    expect(reply.headers['allow']).toBe('GET, HEAD');
  });

  it('serves nothing at / when no folder is given', async () => {
    const { base } = await startAdmin();
    expect((await rawRequest(base, '/')).status).toBe(404);
  });
});
