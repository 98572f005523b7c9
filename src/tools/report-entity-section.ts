/**
 * One entity's part of the HTML report: per state component, the filtered and smoothed
 * estimates with ±2σ bands, the measurements a sensor reads directly, ground truth and the
 * rejections; per sensor, the NIS against its per-sample 95 % bounds and the windowed mean
 * against its band; and per sensor the autocorrelation of the normalized innovations against
 * the whiteness bound (Bar-Shalom, Li, Kirubarajan 2001, §5.4.2; from memory).
 */
import { chiSquareQuantile } from '../estimation/filters/chi-square.js';
import { nisBand } from '../estimation/filters/consistency-band.js';
import type { EstimatorReplay } from './estimator-replay.js';
import type { Float64Column } from './float64-column.js';
import { innovationWhiteness } from './innovation-whiteness.js';
import type { EntitySeries } from './report-series.js';
import { decimateBand, decimateMinMax, type TimeSpan } from './series-decimation.js';
import { escapeHtml, SvgChart } from './svg-plot.js';

/** Buckets per series: two points each, so about 2,000 points per line at most. */
const LINE_BUCKETS = 1000;
const BAND_BUCKETS = 500;
const MAX_LAG = 20;
const X_LABEL = 'seconds since the start of the recording';

function quantile(values: number[], p: number): number {
  const v = values.filter(Number.isFinite).sort((a, b) => a - b);
  return v.length === 0 ? Number.NaN : v[Math.min(v.length - 1, Math.floor(p * v.length))]!;
}

function spanOf(columns: readonly Float64Column[]): TimeSpan {
  let t0 = Infinity;
  let t1 = -Infinity;
  for (const c of columns) {
    for (let i = 0; i < c.length; i++) {
      const t = c.at(i);
      if (t < t0) t0 = t;
      if (t > t1) t1 = t;
    }
  }
  return Number.isFinite(t0) ? { t0, t1 } : { t0: 0, t1: 1 };
}

/** Renders the section of one entity; `t0S` is the recording's first arrival time (s), `index` makes ids unique. */
export function renderEntitySection(series: EntitySeries, est: EstimatorReplay, t0S: number, index: number): string {
  const names = est.runtime.estimator.settings.process.stateNames;
  const span = spanOf([series.filteredT, series.measuredT, series.truthT, series.smoothedT, series.rejectedT]);
  const rel = (t: number): number => t - t0S;
  const x0 = rel(span.t0);
  const x1 = rel(span.t1);
  const plots: string[] = [];
  names.forEach((name, s) => plots.push(statePlot(`${index}-x${s}`, series, est, s, name, span, rel, x0, x1)));
  const nisPlots = est.runtime.sensors.map((sensor, k) => nisPlot(`${index}-n${k}`, series, est, k, sensor.name, sensor.model.dim, span, rel, x0, x1));
  const whitePlots = est.runtime.sensors.map((sensor, k) => whitenessPlot(`${index}-w${k}`, series, k, sensor.name, sensor.model.dim, est.runtime.config.health.confidence));
  const accepted = series.sensors.reduce((a, s) => a + s.nisT.length, 0);
  const reasons = new Map<string, number>();
  for (let i = 0; i < series.rejectedReason.length; i++) {
    const r = est.reasons[series.rejectedReason.at(i)] ?? '?';
    reasons.set(r, (reasons.get(r) ?? 0) + 1);
  }
  const rejected = [...reasons].map(([r, n]) => `${escapeHtml(r)} ${n}`).join(', ') || 'none';
  return [
    `<section class="entity" id="entity-${index}" data-estimator="${escapeHtml(series.estimator)}" data-entity="${escapeHtml(series.entity)}">`,
    `<h2>${escapeHtml(series.estimator)} / ${escapeHtml(series.entity)}</h2>`,
    `<p class="facts">${series.filteredT.length} filtered estimates, ${accepted} measurements with a NIS, rejected: ${rejected}.</p>`,
    '<h3>State estimates (±2σ bands)</h3>', ...plots,
    '<h3>Normalized innovation squared</h3>', ...nisPlots,
    '<h3>Whiteness of the normalized innovations</h3>', ...whitePlots,
    '</section>',
  ].join('\n');
}

function statePlot(
  id: string, series: EntitySeries, est: EstimatorReplay, s: number, name: string, span: TimeSpan,
  rel: (t: number) => number, x0: number, x1: number,
): string {
  const f = series.filteredT;
  const line = decimateMinMax((i) => f.at(i), (i) => series.filteredX.at(i, s), f.length, span, LINE_BUCKETS);
  const band = decimateBand((i) => f.at(i), (i) => series.filteredX.at(i, s) - 2 * series.filteredSigma.at(i, s), (i) => series.filteredX.at(i, s) + 2 * series.filteredSigma.at(i, s), f.length, span, BAND_BUCKETS);
  const st = series.smoothedT;
  const sLine = decimateMinMax((i) => st.at(i), (i) => series.smoothedX.at(i, s), st.length, span, LINE_BUCKETS);
  const sBand = decimateBand((i) => st.at(i), (i) => series.smoothedX.at(i, s) - 2 * series.smoothedSigma.at(i, s), (i) => series.smoothedX.at(i, s) + 2 * series.smoothedSigma.at(i, s), st.length, span, BAND_BUCKETS);
  const m = series.measuredT;
  const dots = decimateMinMax((i) => m.at(i), (i) => series.measuredX.at(i, s), m.length, span, LINE_BUCKETS);
  const tt = series.truthT;
  const truth = decimateMinMax((i) => tt.at(i), (i) => series.truthX.at(i, s), tt.length, span, LINE_BUCKETS);
  // The range follows the estimates, not the first wide prior: central values plus a few typical half-widths.
  const core = [...line.y, ...sLine.y, ...dots.y, ...truth.y];
  const halfWidths = band.upper.map((u, i) => (u - band.lower[i]!) / 2);
  const h = 1.5 * (quantile(halfWidths, 0.5) || 0);
  let lo = quantile(core, 0.005) - h;
  let hi = quantile(core, 0.995) + h;
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) [lo, hi] = [0, 1];
  const pad = (hi - lo) * 0.05;
  const chart = new SvgChart(id, name, X_LABEL, x0, x1, lo - pad, hi + pad);
  chart.band(band.t.map(rel), band.lower, band.upper, 'band-f', 'filtered ±2σ');
  chart.band(sBand.t.map(rel), sBand.lower, sBand.upper, 'band-s', st.length > 0 ? 'smoothed ±2σ' : undefined);
  chart.line(line.t.map(rel), line.y, 'line-f', 'filtered');
  chart.line(sLine.t.map(rel), sLine.y, 'line-s', st.length > 0 ? 'smoothed' : undefined);
  chart.dots(dots.t.map(rel), dots.y, 'dots-m', dots.t.length > 0 ? 'measured' : undefined);
  chart.line(truth.t.map(rel), truth.y, 'line-truth', tt.length > 0 ? 'truth' : undefined);
  rejectionMarks(chart, series, est, null, rel);
  return chart.render();
}

function rejectionMarks(chart: SvgChart, series: EntitySeries, est: EstimatorReplay, sensor: number | null, rel: (t: number) => number): void {
  const byReason = new Map<number, number[]>();
  for (let i = 0; i < series.rejectedT.length; i++) {
    if (sensor !== null && series.rejectedSensor.at(i) !== sensor) continue;
    const r = series.rejectedReason.at(i);
    const list = byReason.get(r) ?? [];
    list.push(rel(series.rejectedT.at(i)));
    byReason.set(r, list);
  }
  for (const [r, xs] of [...byReason].sort((a, b) => a[0] - b[0])) {
    chart.marks(xs, `mark-r${r % 6}`, `rejected: ${est.reasons[r] ?? '?'} (${xs.length})`);
  }
}

function nisPlot(
  id: string, series: EntitySeries, est: EstimatorReplay, k: number, sensor: string, m: number, span: TimeSpan,
  rel: (t: number) => number, x0: number, x1: number,
): string {
  const own = series.sensors[k]!;
  const dots = decimateMinMax((i) => own.nisT.at(i), (i) => own.nis.at(i), own.nisT.length, span, LINE_BUCKETS);
  const health = est.runtime.config.health;
  const N = health.windowN;
  const wt: number[] = [];
  const wy: number[] = [];
  for (let start = 0; start + N <= own.nis.length; start += N) {
    let sum = 0;
    let tSum = 0;
    for (let i = start; i < start + N; i++) {
      sum += own.nis.at(i);
      tSum += own.nisT.at(i);
    }
    wt.push(rel(tSum / N));
    wy.push(sum / N);
  }
  const lower = chiSquareQuantile(0.025, m);
  const upper = chiSquareQuantile(0.975, m);
  const band = nisBand(m, N, health.confidence);
  const top = Math.max(upper, band.upper, quantile(dots.y, 0.995)) * 1.1;
  const chart = new SvgChart(id, `${sensor}: NIS (m = ${m})`, X_LABEL, x0, x1, 0, top);
  chart.dots(dots.t.map(rel), dots.y, 'dots-nis', 'NIS');
  chart.hline(lower, 'bound', 'per-sample 95% bounds');
  chart.hline(upper, 'bound');
  chart.line(wt, wy, 'line-w', `mean of ${N}`);
  chart.hline(band.lower, 'wband', `${(100 * health.confidence).toFixed(0)}% band of the mean`);
  chart.hline(band.upper, 'wband');
  rejectionMarks(chart, series, est, k, rel);
  return chart.render();
}

function whitenessPlot(id: string, series: EntitySeries, k: number, sensor: string, m: number, confidence: number): string {
  const own = series.sensors[k]!;
  const parts = Array.from({ length: m }, (_, c) => innovationWhiteness(own.innovations, c, MAX_LAG, confidence));
  const bound = parts[0]?.bound ?? Number.NaN;
  const peak = Math.max(Number.isFinite(bound) ? bound : 0.1, ...parts.flatMap((p) => p.rho.filter(Number.isFinite).map(Math.abs)));
  const chart = new SvgChart(id, `${sensor}: autocorrelation of ν/√S, K = ${parts[0]?.samples ?? 0}`, 'lag (measurements)', 0.4, MAX_LAG + 0.6, -1.15 * peak, 1.15 * peak);
  const width = 0.8 / m;
  parts.forEach((p, c) => {
    const xs = p.rho.map((_, l) => l + 1 - 0.4 + width * (c + 0.5));
    const ok = p.rho.map((r) => (Number.isFinite(r) ? r : 0));
    chart.bars(xs, ok, width * 0.9, `bar-c${c % 3}`, m > 1 ? `component ${c + 1}` : 'ρ(lag)');
  });
  chart.hline(bound, 'bound', `±z/√K (${(100 * confidence).toFixed(0)}%)`);
  chart.hline(-bound, 'bound');
  chart.hline(0, 'zero');
  return chart.render();
}
