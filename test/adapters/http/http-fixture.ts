/** Starts the admin HTTP server on 127.0.0.1, port 0, over a fake engine; and a raw request helper. */
import { request } from 'node:http';
import { Registry } from 'prom-client';
import {
  createAdminHttpServer, type AdminHttpServer, type AdminHttpServerOptions, type Readiness,
} from '../../../src/adapters/http/admin-http-server.js';
import type { AdminHttpLogger } from '../../../src/adapters/http/admin-http-logger.js';
import { FakeEngineView, fakeSensor, fakeTrack } from '../../helpers/fake-engine-view.js';

const running: AdminHttpServer[] = [];

/** A token long enough for the config schema; never a real secret. */
export const TEST_TOKEN = 'tank-farm-test-token-0123456789';

/** Stops every server startAdmin started (for afterEach). */
export async function stopAllAdmins(): Promise<void> {
  await Promise.all(running.splice(0).map((s) => s.stop()));
}

/** Log lines a test can inspect. */
export function recordingLogger(): AdminHttpLogger & { lines: { level: string; fields: unknown; message: string }[] } {
  const lines: { level: string; fields: unknown; message: string }[] = [];
  const at = (level: string) => (fields: Record<string, unknown>, message: string) => {
    lines.push({ level, fields, message });
  };
  return { lines, info: at('info'), warn: at('warn'), error: at('error') };
}

/** A started server; `base` is its URL without the trailing slash. */
export async function startAdmin(extra: Partial<AdminHttpServerOptions> = {}) {
  const view = new FakeEngineView([
    fakeTrack('tanks', 'tank-a'),
    fakeTrack('yard', 'tug-07', { sensors: [fakeSensor('gnss', { innovationRatio: [0.1, 0.2] })] }),
    fakeTrack('yard', 'dock/tug-12'),
  ]);
  const registry = new Registry();
  const readiness: { current: Readiness } = { current: { ready: true, checks: { broker: true, config: true } } };
  const admin = createAdminHttpServer({
    host: '127.0.0.1', port: 0, view, registry, readiness: () => readiness.current, ...extra,
  });
  running.push(admin);
  const { url } = await admin.start();
  return { admin, view, registry, readiness, url, base: url.replace(/\/$/, '') };
}

/** A reply read in full. */
export interface RawReply {
  readonly status: number;
  readonly headers: Record<string, string | string[] | undefined>;
  readonly body: string;
}

/**
 * Sends `path` exactly as given (fetch would normalize `..` and `%2e%2e` away before sending),
 * on a fresh connection to the server at `base`.
 */
export function rawRequest(
  base: string, path: string, init: { method?: string; headers?: Record<string, string | number> } = {},
  body?: string,
): Promise<RawReply> {
  const { hostname, port } = new URL(base);
  return new Promise((resolve, reject) => {
    const req = request({ host: hostname, port, path, method: init.method ?? 'GET', headers: init.headers, agent: false }, (res) => {
      let text = '';
      res.setEncoding('utf8');
      res.on('data', (c: string) => (text += c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: text }));
      res.on('error', reject);
    });
    req.on('error', reject);
    req.end(body);
  });
}
