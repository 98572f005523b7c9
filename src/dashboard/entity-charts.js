/* global uPlot */
/**
 * The selected track's charts: one per state component (estimates with the ±2σ band and
 * matching readings), one per sensor's NIS, trace(P), and charts of readings that match no
 * state. Rebuilt when the track's shape changes (a sensor appears), otherwise only refilled.
 */
import { nisChartOptions, stateChartOptions, traceChartOptions } from './chart-options.js';
import {
  nisChartData, placeReadings, readingsChartData, rejectionMarks, stateChartData, traceChartData,
} from './chart-data.js';
import { el } from './dom.js';

export class EntityCharts {
  /** @param {HTMLElement} estimates @param {HTMLElement} consistency */
  constructor(estimates, consistency) {
    this.estimates = estimates;
    this.consistency = consistency;
    this.record = null;
    this.shape = '';
    this.charts = [];
    this.windowS = 300;
    this.view = null;
    new ResizeObserver(() => this.resize()).observe(estimates);
    // Charts scrolled out of sight are not redrawn; each catches up when it comes back.
    this.visibility = new IntersectionObserver((entries) => {
      for (const entry of entries) {
        const chart = this.charts.find((c) => c.card === entry.target);
        if (chart === undefined) continue;
        chart.visible = entry.isIntersecting;
        if (chart.visible && chart.stale) this.draw(chart);
      }
    });
  }

  /** Shows `record` (a track-store record) or nothing. */
  show(record) {
    this.record = record;
    this.rebuild();
  }

  /** Refills the charts from the record's histories. */
  update() {
    const r = this.record;
    if (r === null) return;
    if (shapeOf(r) !== this.shape) this.rebuild();
    const newest = r.filtered?.lastTimeS ?? NaN;
    if (!Number.isFinite(newest)) return;
    const since = newest - this.windowS;
    this.view = { since, x: [Math.max(since, r.filtered.firstTimeS), newest], marks: rejectionMarks(r, since) };
    for (const c of this.charts) {
      if (c.visible) this.draw(c);
      else c.stale = true;
    }
  }

  draw(c) {
    if (this.view === null) return;
    const { data, range } = c.fill(this.view.since);
    c.holder.range = range ?? undefined;
    c.holder.x = this.view.x;
    c.holder.marks = this.view.marks;
    c.plot.setData(data);
    c.stale = false;
  }

  /** Follows the cards' width; height changes (legends, new cards) need no redraw. */
  resize() {
    const widths = this.charts.map((c) => widthOf(c.body)); // all reads before any write: one layout
    this.charts.forEach((c, i) => {
      if (widths[i] !== c.plot.width) c.plot.setSize({ width: widths[i], height: c.plot.height });
    });
  }

  rebuild() {
    for (const c of this.charts) c.plot.destroy();
    this.charts = [];
    this.view = null;
    this.visibility.disconnect();
    this.estimates.replaceChildren();
    this.consistency.replaceChildren();
    const r = this.record;
    this.shape = r === null ? '' : shapeOf(r);
    if (r === null || r.stateNames === null) return;
    const cards = [];
    planCards(r, this.estimates, this.consistency, (...args) => cards.push(card(...args)));
    this.mount(cards);
    this.update();
  }

  /** Creates the plots once every card is in the page, so the widths cost one layout. */
  mount(cards) {
    if (typeof globalThis.uPlot !== 'function') {
      for (const { body } of cards) {
        body.textContent = 'Chart unavailable: the chart library did not load from /vendor/.';
        body.className = 'chart-body chart-missing';
      }
      return;
    }
    const widths = cards.map(({ body }) => widthOf(body));
    cards.forEach(({ card: node, body, options, fill }, i) => {
      const holder = { marks: [[], []] };
      const plot = new uPlot(options(holder, widths[i]), [[]], body);
      this.charts.push({ plot, holder, body, card: node, fill, visible: true, stale: true });
      this.visibility.observe(node);
    });
  }
}

/** Calls `add` for each chart the record needs, in page order. */
function planCards(r, estimates, consistency, add) {
  const sensorNames = [...new Set([...r.sensors.keys(), ...r.readings.keys()])];
  const colourOf = (s) => Math.max(0, sensorNames.indexOf(s));
  const { byState, own } = placeReadings(r);
  r.stateNames.forEach((name, i) => {
    const sensors = byState.get(name) ?? [];
    const note = `filtered ±2σ, smoothed${sensors.map((s) => `, ${s} readings`).join('')}`;
    add(estimates, 'state', name, note, (holder, width) =>
      stateChartOptions({ width, unit: name, sensors, sensorIndex: colourOf, holder, rejections: () => holder.marks }),
    (since) => stateChartData(r, i, sensors, since));
  });
  for (const s of own) {
    const valueCount = r.readings.get(s).columns.length - 2;
    for (let v = 0; v < valueCount; v++) {
      const label = valueCount === 1 ? s : `${s} [${v}]`;
      add(estimates, 'readings', `${label} readings`, 'as received; no state reads it alone', (holder, width) =>
        stateReadingsOptions(width, label, colourOf(s), holder),
      (since) => readingsChartData(r, s, v, since));
    }
  }
  for (const s of sensorNames) {
    add(consistency, 'nis', `NIS · ${s}`, 'windowed mean within its band', (holder, width) =>
      nisChartOptions({ width, colourIndex: colourOf(s), holder, rejections: () => holder.marks }),
    (since) => nisChartData(r, s, since));
  }
  add(consistency, 'trace', 'trace(P)', 'sum of σ², mixed units', (holder, width) =>
    traceChartOptions({ width, holder, rejections: () => holder.marks }),
  (since) => traceChartData(r, since));
}

/** A chart card appended to `grid`, its plot still to be made from `options`. */
function card(grid, kind, title, note, options, fill) {
  const body = el('div', { className: 'chart-body' });
  const node = el('figure', { className: 'chart-card', dataset: { kind, chart: title } },
    el('figcaption', {}, el('span', { className: 'chart-title' }, title), el('span', { className: 'chart-note' }, note)),
    body);
  grid.append(node);
  return { card: node, body, options, fill };
}

/** Readings without an estimate beside them: accepted and refused points only. */
function stateReadingsOptions(width, label, colourIndex, holder) {
  const opts = stateChartOptions({ width, unit: label, sensors: [label], sensorIndex: () => colourIndex, holder, rejections: () => holder.marks });
  opts.series = [opts.series[0], ...opts.series.slice(5)];
  delete opts.bands;
  return opts;
}

/** What decides the set of charts: state names, sensors seen, readings' shapes. */
function shapeOf(r) {
  const readings = [...r.readings].map(([s, series]) => `${s}:${series.columns.length}`);
  return `${r.stateNames?.join() ?? ''}|${[...r.sensors.keys()].join()}|${readings.join()}`;
}

function widthOf(body) {
  return Math.max(240, Math.floor(body.clientWidth || body.parentElement?.clientWidth || 480));
}
