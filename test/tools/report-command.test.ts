import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { runReportCommand } from '../../src/tools/report-command.js';
import { captureIo, writeDemoConfig, writeScenarioRecording } from './recording-fixtures.js';

const CHROMIUM = '/usr/bin/chromium';
const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

let dir = '';
let config = '';
let recording = '';
let report = '';

vi.setConfig({ testTimeout: 180_000 });

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'statecast-report-'));
  config = await writeDemoConfig(dir, ['tank-farm', 'vehicle-yard']);
  recording = join(dir, 'sites.jsonl');
  // A minute of both demo sites (3 tanks, 12 tugs) with ground truth, fixed seed.
  await writeScenarioRecording(recording, ['tank-farm', 'vehicle-yard'], 60, 5);
  report = join(dir, 'report.html');
  const c = captureIo();
  const code = await runReportCommand(['--config', config, '--in', recording, '--out', report], c.io);
  if (code !== 0) throw new Error(`report exited ${code}: ${c.err()}`);
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('statecast report', () => {
  it('writes the same page for the same recording', async () => {
    const again = join(dir, 'again.html');
    expect(await runReportCommand(['--config', config, '--in', recording, '--out', again], captureIo().io)).toBe(0);
    expect((await readFile(again)).equals(await readFile(report))).toBe(true);
  });

  it('carries the advisory caution and no script or external reference', async () => {
    const html = await readFile(report, 'utf8');
    expect(html).toContain('advisory and are not a safety function');
    expect(html).toContain('defer to local codes and licensed practice');
    expect(html).not.toMatch(/<script|<link|src=|@import|https?:\/\/(?!www\.w3\.org\/2000\/svg)/);
  });

  it('caps the entities drawn and says so', async () => {
    const capped = join(dir, 'capped.html');
    const c = captureIo();
    expect(await runReportCommand(['--config', config, '--in', recording, '--out', capped, '--entities', '2'], c.io)).toBe(0);
    const html = await readFile(capped, 'utf8');
    expect(html.match(/<section class="entity"/g)?.length).toBe(2);
    expect(html).toContain('Showing the first 2 of 15 entities');
  });

  it('renders in Chromium with the plots of every entity, no console errors and no requests but the file', async (ctx) => {
    if (!existsSync(CHROMIUM)) {
      console.warn(`${CHROMIUM} is not installed: skipping the browser check of the report`);
      ctx.skip();
      return;
    }
    const browser = await chromium.launch({ executablePath: CHROMIUM, args: CHROMIUM_ARGS });
    try {
      const page = await browser.newPage({ viewport: { width: 860, height: 1200 } });
      const errors: string[] = [];
      const requests: string[] = [];
      page.on('console', (m) => {
        if (m.type() === 'error') errors.push(m.text());
      });
      page.on('pageerror', (e) => errors.push(e.message));
      page.on('request', (r) => requests.push(r.url()));
      const url = pathToFileURL(report).href;
      await page.goto(url);
      const sections = await page.$$eval('section.entity', (list) =>
        list.map((s) => ({
          estimator: s.getAttribute('data-estimator'),
          svgs: s.querySelectorAll('svg.plot').length,
          drawn: [...s.querySelectorAll('svg.plot')].filter((svg) => svg.querySelector('polyline, polygon, path') !== null).length,
        })),
      );
      expect(sections.length).toBe(15);
      // One plot per state, then NIS and whiteness per sensor: tanks 3 + 2·2, yard 4 + 2·2.
      for (const s of sections) {
        const expected = s.estimator === 'tanks' ? 7 : 8;
        expect(s.svgs).toBe(expected);
        expect(s.drawn).toBe(expected);
      }
      const box = await page.locator('svg.plot').first().boundingBox();
      expect(box?.width).toBeGreaterThan(700);
      expect(errors).toEqual([]);
      expect(requests).toEqual([url]);
      const artifacts = resolve('artifacts');
      await mkdir(artifacts, { recursive: true });
      await page.screenshot({ path: join(artifacts, 'report.png') });
    } finally {
      await browser.close();
    }
  });
});
