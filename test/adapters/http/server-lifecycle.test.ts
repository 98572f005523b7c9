import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { Agent, request, type IncomingMessage } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Gauge, Registry } from 'prom-client';
import { afterEach, describe, expect, it } from 'vitest';
import { createAdminHttpServer } from '../../../src/adapters/http/admin-http-server.js';
import { HttpListenError } from '../../../src/adapters/http/http-listen-error.js';
import { FakeEngineView } from '../../helpers/fake-engine-view.js';
import { startAdmin, stopAllAdmins, TEST_TOKEN } from './http-fixture.js';

const agents: Agent[] = [];
afterEach(async () => {
  for (const agent of agents.splice(0)) agent.destroy();
  await stopAllAdmins();
});

const ready = () => ({ ready: true, checks: {} });
const bare = (port: number) =>
  createAdminHttpServer({ host: '127.0.0.1', port, view: new FakeEngineView(), registry: new Registry(), readiness: ready });

describe('admin HTTP server lifecycle', () => {
  it('resolves every start() with the same URL', async () => {
    const { admin, url } = await startAdmin();
    expect(url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/$/);
    await expect(admin.start()).resolves.toEqual({ url });
  });

  it('stops once however often stop() is called, and stops before start', async () => {
    const admin = bare(0);
    await admin.stop();
    await admin.start();
    await Promise.all([admin.stop(), admin.stop()]);
    expect(admin.server.listening).toBe(false);
  });

  it('starts again after a stop', async () => {
    const { admin } = await startAdmin();
    await admin.stop();
    const { url } = await admin.start();
    const res = await fetch(`${url}healthz`);
    await res.text();
    expect(res.status).toBe(200);
  });

  it('names host and port when the port is already in use', async () => {
    const { url } = await startAdmin();
    const port = Number(new URL(url).port);
    const second = bare(port);
    const error = await second.start().then(() => null, (e: unknown) => e);
    expect(error).toBeInstanceOf(HttpListenError);
    expect((error as HttpListenError).code).toBe('HTTP_PORT_IN_USE');
    expect((error as HttpListenError).message).toContain(`127.0.0.1:${port}`);
    await second.stop();
  });

  it('cuts a stalled request at the close deadline', async () => {
    const { admin, base } = await startAdmin({ token: TEST_TOKEN, closeDeadlineMs: 50 });
    const { hostname, port } = new URL(base);
    const stalled = request({
      host: hostname, port, method: 'POST', path: '/api/v1/tracks/yard/tug-07/reset', agent: false,
      headers: { Authorization: `Bearer ${TEST_TOKEN}`, 'Transfer-Encoding': 'chunked' },
    });
    const closed = new Promise<void>((resolve) => stalled.on('close', () => resolve()));
    stalled.on('error', () => undefined); // the cut is the point of the test
    stalled.write('x');
    await new Promise<void>((resolve) => admin.server.once('request', () => resolve()));
    await admin.stop();
    await closed;
    expect(admin.server.listening).toBe(false);
  });

  it('releases a keep-alive connection whose response was held when stop began', async () => {
    const { admin, base, registry } = await holdingServer();
    let release = () => {};
    const held = new Promise<void>((resolve) => (release = resolve));
    new Gauge({ name: 'statecast_test_slow', help: 'held scrape', registers: [registry], collect: () => held });
    const inFlight = new Promise<void>((resolve) => admin.server.once('request', () => resolve()));
    const reply = keepAliveGet(base, '/metrics');
    await inFlight;
    const stopped = admin.stop();
    release();
    await (await reply).ended;
    await stopped;
    expect(admin.server.listening).toBe(false);
  });

  it('releases a keep-alive connection whose response began before stop and ended after', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'statecast-lifecycle-'));
    try {
      writeFileSync(join(dir, 'index.html'), Buffer.alloc(8 * 1024 * 1024, 0x61));
      const { admin, base } = await holdingServer({ staticDir: dir });
      const { res, ended } = await keepAliveGet(base, '/');
      res.pause(); // headers are out, the body is still streaming
      const stopped = admin.stop();
      res.resume();
      await ended;
      await stopped;
      expect(admin.server.listening).toBe(false);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

/**
 * A server whose own idle timeout and close deadline are far beyond the test timeout, so only
 * stop()'s handling of finished keep-alive responses can let it close in time.
 */
async function holdingServer(extra: { staticDir?: string } = {}) {
  const started = await startAdmin({ ...extra, closeDeadlineMs: 600_000 });
  started.admin.server.keepAliveTimeout = 600_000;
  return started;
}

/** GET over a keep-alive agent that never drops idle sockets by itself. */
function keepAliveGet(base: string, path: string): Promise<{ res: IncomingMessage; ended: Promise<void> }> {
  const { hostname, port } = new URL(base);
  const agent = new Agent({ keepAlive: true });
  agents.push(agent);
  return new Promise((resolve, reject) => {
    const req = request({ host: hostname, port, path, agent }, (res) => {
      const ended = new Promise<void>((done) => res.on('end', () => done()));
      res.on('data', () => undefined);
      resolve({ res, ended });
    });
    req.on('error', reject);
    req.end();
  });
}
