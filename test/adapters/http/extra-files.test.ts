import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { DASHBOARD_VENDOR_ASSETS } from '../../../src/dashboard/vendor-assets.js';
import { startAdmin, stopAllAdmins } from './http-fixture.js';

let dir = '';

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'statecast-extra-'));
  writeFileSync(join(dir, 'chart.js'), 'window.chart = 1;');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));
afterEach(stopAllAdmins);

describe('extra files', () => {
  it('serves a named file at its fixed path with its content type', async () => {
    const { base } = await startAdmin({ extraFiles: { '/vendor/chart.js': join(dir, 'chart.js') } });
    const res = await fetch(`${base}/vendor/chart.js`);
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toBe('text/javascript; charset=utf-8');
    expect(await res.text()).toBe('window.chart = 1;');
  });

  it('answers 404 when the named file has gone', async () => {
    const { base } = await startAdmin({ extraFiles: { '/vendor/gone.js': join(dir, 'gone.js') } });
    expect((await fetch(`${base}/vendor/gone.js`)).status).toBe(404);
  });

  it('serves the dashboard chart library from node_modules', async () => {
    const { base } = await startAdmin({ extraFiles: DASHBOARD_VENDOR_ASSETS });
    const res = await fetch(`${base}/vendor/uplot.iife.min.js`);
    expect(res.status).toBe(200);
    expect(await res.text()).toContain('uPlot');
  });
});
