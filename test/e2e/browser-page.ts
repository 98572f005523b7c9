/**
 * Debian's Chromium through playwright-core for the dashboard tests, with a page that records
 * console errors, uncaught exceptions and every request to a host other than 127.0.0.1.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { REPO_ROOT } from './daemon-process.js';

/** Where the screenshots go (git-ignored). */
export const ARTIFACTS_DIR = join(REPO_ROOT, 'artifacts');

const CHROMIUM_ARGS = [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
];

/** A page and what it noticed. */
export interface WatchedPage {
  readonly browser: Browser;
  readonly page: Page;
  /** Console errors and uncaught exceptions, in order. */
  readonly errors: string[];
  /** URLs of requests and WebSockets to anywhere but 127.0.0.1. */
  readonly foreignRequests: string[];
  /** Saves a full-page screenshot as artifacts/dashboard-NAME.png. */
  screenshot(name: string): Promise<void>;
}

/** Launches the browser and opens a watched page (not yet navigated). */
export async function openWatchedPage(): Promise<WatchedPage> {
  const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: CHROMIUM_ARGS });
  const page = await browser.newPage({ viewport: { width: 1440, height: 1600 } });
  const errors: string[] = [];
  const foreignRequests: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(`console: ${m.text()} (${m.location().url})`);
  });
  page.on('pageerror', (e) => errors.push(`uncaught: ${e.message}`));
  const check = (address: string) => {
    const url = new URL(address);
    if (url.protocol !== 'data:' && url.hostname !== '127.0.0.1') foreignRequests.push(address);
  };
  page.on('request', (r) => check(r.url()));
  page.on('websocket', (ws) => check(ws.url()));
  page.setDefaultTimeout(15_000);
  mkdirSync(ARTIFACTS_DIR, { recursive: true });
  return {
    browser,
    page,
    errors,
    foreignRequests,
    screenshot: async (name) => {
      await page.screenshot({ path: join(ARTIFACTS_DIR, `dashboard-${name}.png`), fullPage: true });
    },
  };
}
