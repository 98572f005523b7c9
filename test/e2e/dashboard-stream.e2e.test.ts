/**
 * The dashboard against a stand-in daemon (fake-stream-server.ts) for what the real daemon
 * cannot be made to do on demand: chosen measurement frames, refusing them as an older daemon
 * does, a dropped connection, and twelve tracks at 10 Hz. Tests run in order on one page; waits are bounded.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openWatchedPage, type WatchedPage } from './browser-page.js';
import { startFakeStreamServer, type FakeStreamServer } from './fake-stream-server.js';

const POLL = { interval: 100, timeout: 15_000 };
const T0 = 1_767_225_600;
const TUGS = Array.from({ length: 12 }, (_, i) => `tug-${String(i + 1).padStart(2, '0')}`);

let server: FakeStreamServer;
let watched: WatchedPage | undefined;

function page(): Page {
  if (watched === undefined) throw new Error('the page did not open');
  return watched.page;
}

function chartNames(): Promise<string[]> {
  return page().locator('.chart-card').evaluateAll((cards) => cards.map((c) => (c as HTMLElement).dataset['chart'] ?? ''));
}

/** tank-a estimates and readings for 3 s of event time from `fromS`; pressure refused from 2 s on. */
function sendTankSeconds(fromS: number): void {
  for (let k = 0; k < 30; k++) {
    const t = fromS + k / 10;
    const level = 4 + 0.001 * k;
    server.sendEstimate('tanks', 'tank-a', 'filtered', t, [level, 0.001, 0.03], [0.01, 0.001, 0.01]);
    const verdict = k >= 20 ? 'gate' : 'applied';
    server.sendMeasurement({ estimator: 'tanks', entity: 'tank-a', sensor: 'pressure', t, values: [level + 0.03], nis: k >= 20 ? 40 : 0.8, verdict });
    if (k % 10 === 0) {
      server.sendMeasurement({ estimator: 'tanks', entity: 'tank-a', sensor: 'level', t, values: [level], nis: 0.5, verdict: 'applied' });
    }
  }
}

beforeAll(async () => {
  server = await startFakeStreamServer();
  server.sensors.set('tanks/tank-a', [{ name: 'level', gate: 0 }, { name: 'pressure', gate: 0 }]);
  watched = await openWatchedPage();
  await watched.page.goto(server.url);
}, 60_000);

afterAll(async () => {
  await watched?.browser.close();
  await server?.stop();
}, 30_000);

describe('dashboard stream handling', () => {
  it('subscribes to filtered and smoothed estimates with health and measurement frames', async () => {
    await expect.poll(() => server.requests.length, POLL).toBeGreaterThan(0);
    expect(server.requests[0]).toEqual({
      op: 'subscribe', id: 'with-measurements', kinds: ['filtered', 'smoothed'], health: true, measurements: true,
    });
  });

  it('plots level readings on the level chart and pressure readings on a chart of their own', async () => {
    await expect.poll(() => page().locator('#connection').getAttribute('data-state'), POLL).toBe('live');
    sendTankSeconds(T0);
    await expect.poll(chartNames, POLL).toContain('pressure readings');
    // Each reading is its own WebSocket frame and the dashboard redraws on animation frames, so
    // the level chart's note may follow the pressure chart by a redraw: wait for it too.
    await expect.poll(() => page().locator('.chart-card[data-chart="level"] .chart-note').innerText(), POLL).toContain('level readings');
    await expect.poll(() => page().locator('#readings-note').innerText(), POLL).toContain('arrive live');
    await watched!.screenshot('readings');
  }, 30_000);

  it('reconnects by itself after the connection drops', async () => {
    server.dropClients();
    await expect.poll(() => page().locator('#connection').getAttribute('data-state'), POLL).toBe('waiting');
    expect(await page().locator('#connection').innerText()).toMatch(/connection lost · retrying in \d+ s/);
    await expect.poll(() => page().locator('#connection').getAttribute('data-state'), POLL).toBe('live');
    expect(server.connections()).toBe(2);
  }, 30_000);

  it('falls back to estimates alone when the daemon refuses measurement frames', async () => {
    server.acceptMeasurements = false;
    const before = server.requests.length;
    server.dropClients();
    await expect.poll(() => server.requests.slice(before).filter((r) => r['op'] === 'subscribe').length, POLL).toBe(2);
    expect(server.requests.slice(before).filter((r) => r['op'] === 'subscribe').map((r) => 'measurements' in r)).toEqual([true, false]);
    await expect.poll(() => page().locator('#connection').getAttribute('data-state'), POLL).toBe('live');
    expect(await page().locator('#readings-note').innerText()).toContain('polled every 2 s');
  }, 30_000);

  it('keeps up with twelve tracks at 10 Hz', async () => {
    const steps = 40;
    for (let k = 0; k < steps; k++) {
      const t = T0 + 10 + k / 10;
      for (const [i, tug] of TUGS.entries()) {
        server.sendEstimate('yard', tug, 'filtered', t, [i * 10 + k, 5, 1, 0.5], [2, 2, 0.3, 0.3]);
        server.sendEstimate('yard', tug, 'smoothed', t - 0.5, [i * 10 + k - 0.5, 5, 1, 0.5], [1.5, 1.5, 0.2, 0.2]);
      }
      await new Promise((resolve) => setTimeout(resolve, 100));
    }
    const rows = page().locator('.track-group[data-estimator="yard"] .track-row');
    await expect.poll(() => rows.count(), POLL).toBe(12);
    await page().click('.track-row[data-entity="tug-12"]');
    await expect.poll(() => page().locator('#selected-time').getAttribute('data-t'), POLL).toBe(String(T0 + 10 + (steps - 1) / 10));
    expect(await chartNames()).toEqual(['east', 'north', 'v_east', 'v_north', 'trace(P)']);
    await watched!.screenshot('yard');
  }, 60_000);

  it('raises no console errors', () => {
    expect(watched!.errors).toEqual([]);
  });

  it('sends no request to any host but 127.0.0.1', () => {
    expect(watched!.foreignRequests).toEqual([]);
  });
});
