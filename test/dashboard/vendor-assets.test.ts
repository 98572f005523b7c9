import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { DASHBOARD_VENDOR_ASSETS } from '../../src/dashboard/vendor-assets.js';

describe('DASHBOARD_VENDOR_ASSETS', () => {
  it('maps exactly the two paths the page loads', () => {
    const page = readFileSync(new URL('../../src/dashboard/index.html', import.meta.url), 'utf8');
    const loaded = [...page.matchAll(/(?:src|href)="(\/vendor\/[^"]+)"/g)].map((m) => m[1]).sort();
    expect(Object.keys(DASHBOARD_VENDOR_ASSETS).sort()).toEqual(loaded);
  });

  it('points the script path at the build that defines the uPlot global', () => {
    const text = readFileSync(DASHBOARD_VENDOR_ASSETS['/vendor/uplot.iife.min.js']!, 'utf8');
    expect(text).toMatch(/^\/\*![^*]*\*\/\s*var uPlot=/);
  });

  it('points the stylesheet path at uPlot\'s CSS', () => {
    const text = readFileSync(DASHBOARD_VENDOR_ASSETS['/vendor/uplot.min.css']!, 'utf8');
    expect(text).toContain('.uplot');
  });
});
