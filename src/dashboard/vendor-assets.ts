/**
 * Third-party files the dashboard loads, served by the daemon straight from node_modules so
 * the page works offline on a gateway and the repository holds no copies of them.
 */
import { createRequire } from 'node:module';

const require = createRequire(import.meta.url);

/**
 * URL path → absolute file path of each vendored asset: the chart library (uPlot, a runtime
 * dependency) as a classic script that defines `window.uPlot`, and its stylesheet. The page
 * loads exactly these two paths.
 */
export const DASHBOARD_VENDOR_ASSETS: Readonly<Record<string, string>> = Object.freeze({
  '/vendor/uplot.iife.min.js': require.resolve('uplot/dist/uPlot.iife.min.js'),
  '/vendor/uplot.min.css': require.resolve('uplot/dist/uPlot.min.css'),
});
