/* global uPlot */
/**
 * uPlot options for the dashboard's three kinds of chart (a state component, a sensor's NIS,
 * trace(P)) in the page's own palette, and the plugin that marks gate rejections.
 * uPlot is the global the vendored script defines.
 */

/** Colours of the page (also in dashboard.css). */
export const PALETTE = Object.freeze({
  ink: '#1e2b33',
  grid: '#e4e1d9',
  filtered: '#1f5f8b',
  band: 'rgba(31, 95, 139, 0.15)',
  bandEdge: 'rgba(31, 95, 139, 0.45)',
  smoothed: '#c46d1b',
  refused: '#b3261e',
  nisBand: 'rgba(96, 116, 126, 0.16)',
  nisEdge: '#7c8b93',
  trace: '#5a4a8f',
  sensors: ['#4d7a2a', '#7a3f8f', '#2a7a78', '#8f5a2a', '#3f5a8f'],
});

const FONT = '11px system-ui, -apple-system, "Segoe UI", sans-serif';
const HEIGHT_PX = 190;

/** The colour of the i-th sensor of a track. */
export function sensorColour(i) {
  return PALETTE.sensors[i % PALETTE.sensors.length];
}

function axes(yLabel) {
  const common = { stroke: PALETTE.ink, font: FONT, grid: { stroke: PALETTE.grid, width: 1 }, ticks: { stroke: PALETTE.grid } };
  const y = {
    ...common, label: yLabel, labelFont: FONT, labelSize: 16, size: 64,
    values: (u, splits, axis, space, incr) => splits.map((v) => tickText(v, incr)),
  };
  return [common, y];
}

/**
 * Tick text with as many decimals as the tick step needs (so 7.215 and 7.220 do not both read
 * 7.22), in exponent form for very small or large steps.
 */
export function tickText(v, stepSize) {
  if (v === null || v === undefined) return '';
  const step = Math.abs(stepSize);
  if (!(step > 0) || !Number.isFinite(step)) return String(Number(v.toPrecision(3)));
  let decimals = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
  if (Math.abs(step * 10 ** decimals - Math.round(step * 10 ** decimals)) > 1e-6) decimals += 1;
  if (decimals > 6 || Math.abs(v) >= 1e6) return v === 0 ? '0' : v.toExponential(Math.min(3, decimals > 6 ? 1 : 2));
  return v.toFixed(decimals);
}

/** Tick text for a log axis: plain from 0.01 to 10⁴, else like 1e-4. */
function logTickText(v) {
  if (v === null || v === undefined) return '';
  return v >= 0.01 && v < 1e4 ? String(Number(v.toPrecision(3))) : v.toExponential(0);
}

function line(label, stroke, extra = {}) {
  return { label, stroke, width: 1.5, points: { show: false }, ...extra };
}

/** A points-only series; `hollow` draws rings (refused readings). */
function dots(label, colour, hollow = false) {
  return {
    label,
    stroke: colour,
    fill: hollow ? '#ffffff' : colour,
    width: hollow ? 1.5 : 1,
    paths: () => null,
    points: { show: true, size: hollow ? 6 : 3.5, stroke: colour, fill: hollow ? '#ffffff' : colour },
  };
}

function base(width, yLabel, holder, series, plugins) {
  return {
    width,
    height: HEIGHT_PX,
    series: [{ label: 'time' }, ...series],
    axes: axes(yLabel),
    scales: { x: { time: true, range: (u, min, max) => holder.x ?? [min, max] }, y: { range: (u, min, max) => holder.range ?? defaultRange(min, max) } },
    cursor: { sync: { key: 'selected-track' }, points: { size: 6 } },
    legend: { live: true },
    plugins,
  };
}

function defaultRange(min, max) {
  if (min === null || max === null) return [0, 1];
  return uPlot.rangeNum(min, max, 0.1, true);
}

/**
 * A state component: filtered estimate with its ±2σ band, smoothed estimate, and the readings
 * of `sensors` (accepted filled, refused hollow). Series order is the data order.
 * @param {{ width: number, unit: string, sensors: string[], sensorIndex: (s: string) => number,
 *   holder: { range?: [number, number] }, rejections: () => number[] }} o
 */
export function stateChartOptions(o) {
  const series = [
    line('filtered', PALETTE.filtered, { width: 2 }),
    line('+2σ', PALETTE.bandEdge, { width: 0.75 }),
    line('−2σ', PALETTE.bandEdge, { width: 0.75 }),
    line('smoothed', PALETTE.smoothed, { dash: [6, 4] }),
  ];
  for (const s of o.sensors) {
    series.push(dots(`${s} reading`, sensorColour(o.sensorIndex(s))), dots(`${s} refused`, PALETTE.refused, true));
  }
  const opts = base(o.width, o.unit, o.holder, series, [rejectionMarkers(o.rejections)]);
  opts.bands = [{ series: [2, 3], fill: PALETTE.band }];
  return opts;
}

/**
 * One sensor's NIS: the windowed mean against its acceptance band and, with measurement
 * frames, each reading's NIS.
 */
export function nisChartOptions(o) {
  const series = [
    line('windowed mean', PALETTE.ink, { width: 2 }),
    line('band low', PALETTE.nisEdge, { width: 1, dash: [3, 3] }),
    line('band high', PALETTE.nisEdge, { width: 1, dash: [3, 3] }),
    dots('NIS', sensorColour(o.colourIndex)),
    dots('refused', PALETTE.refused, true),
  ];
  const opts = base(o.width, 'NIS', o.holder, series, [rejectionMarkers(o.rejections)]);
  opts.bands = [{ series: [3, 2], fill: PALETTE.nisBand }];
  return opts;
}

/** trace(P) on a log scale: it falls by orders of magnitude after initialization. */
export function traceChartOptions(o) {
  const opts = base(o.width, 'trace(P)', o.holder, [line('trace(P)', PALETTE.trace, { width: 2 })], [rejectionMarkers(o.rejections)]);
  opts.scales.y = { distr: 3 };
  opts.axes[1].filter = decadesOnly;
  opts.axes[1].values = (u, splits) => splits.map(logTickText);
  return opts;
}

/** Keeps the log axis to whole decades (less grid to read) when at least two are in view. */
function decadesOnly(u, splits) {
  const decades = splits.map((v) => (v > 0 && Math.abs(Math.log10(v) - Math.round(Math.log10(v))) < 1e-9 ? v : null));
  return decades.filter((v) => v !== null).length >= 2 ? decades : splits;
}

/**
 * Marks gate rejections: a dotted line across the plot at each rejection, with a small
 * downward triangle at the top edge. Rejections closer than a few pixels form one cluster: a
 * faint span from first to last with the total count beside its triangle.
 * @param {() => [number[], number[]]} marks times and counts
 */
export function rejectionMarkers(marks) {
  return { hooks: { draw: [(u) => drawRejections(u, ...marks())] } };
}

function drawRejections(u, times, counts) {
  if (times.length === 0) return;
  const { ctx, bbox } = u;
  const dpr = devicePixelRatio || 1;
  const clusters = [];
  for (let i = 0; i < times.length; i++) {
    if (times[i] < u.scales.x.min || times[i] > u.scales.x.max) continue;
    const x = Math.round(u.valToPos(times[i], 'x', true)) + 0.5;
    const last = clusters.at(-1);
    if (last !== undefined && x - last.to < 6 * dpr) {
      last.to = x;
      last.count += counts[i] ?? 1;
    } else clusters.push({ from: x, to: x, count: counts[i] ?? 1 });
  }
  const top = bbox.top;
  const bottom = bbox.top + bbox.height;
  ctx.save();
  ctx.strokeStyle = PALETTE.refused;
  ctx.fillStyle = PALETTE.refused;
  ctx.font = `${10 * dpr}px system-ui, sans-serif`;
  ctx.lineWidth = dpr;
  for (const c of clusters) {
    ctx.globalAlpha = 0.08;
    if (c.to > c.from) ctx.fillRect(c.from, top, c.to - c.from, bottom - top);
    ctx.globalAlpha = 0.55;
    ctx.setLineDash([2 * dpr, 3 * dpr]);
    ctx.beginPath();
    for (const x of c.to > c.from ? [c.from, c.to] : [c.from]) {
      ctx.moveTo(x, top);
      ctx.lineTo(x, bottom);
    }
    ctx.stroke();
    ctx.globalAlpha = 0.9;
    ctx.beginPath();
    ctx.moveTo(c.from - 4 * dpr, top);
    ctx.lineTo(c.from + 4 * dpr, top);
    ctx.lineTo(c.from, top + 6 * dpr);
    ctx.fill();
    if (c.count > 1) ctx.fillText(`×${c.count}`, c.from + 5 * dpr, top + 9 * dpr);
  }
  ctx.restore();
}
