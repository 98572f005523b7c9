/**
 * Turns a track's histories (track-store.js) into the column arrays uPlot draws, and picks
 * each chart's value range. Pure: no DOM, no uPlot, so it is unit-tested in Node.
 */

/**
 * Aligns tables `[times, ...columns]` (each sorted by time) on the union of their times.
 * A time a table lacks holds undefined (uPlot bridges it); a null stays a gap.
 * @param {(number | null)[][][]} tables
 * @returns {(number | null | undefined)[][]}
 */
export function alignTables(tables) {
  let count = 0;
  for (const t of tables) count += t[0].length;
  const all = new Float64Array(count);
  let n = 0;
  for (const t of tables) for (const x of t[0]) all[n++] = x;
  all.sort();
  const xs = [];
  for (let i = 0; i < all.length; i++) if (i === 0 || all[i] !== all[i - 1]) xs.push(all[i]);
  const out = [xs];
  for (const t of tables) {
    const times = t[0];
    for (let c = 1; c < t.length; c++) {
      const column = new Array(xs.length).fill(undefined);
      let j = 0;
      for (let i = 0; i < times.length; i++) {
        while (xs[j] < times[i]) j++;
        column[j] = t[c][i];
      }
      out.push(column);
    }
  }
  return out;
}

/**
 * Which sensor's readings go on which state chart: a sensor reading one value whose name is
 * a state's name. The page cannot see the measurement models, so other sensors get a chart of
 * their own readings instead.
 * @returns {{ byState: Map<string, string[]>, own: string[] }}
 */
export function placeReadings(record) {
  const byState = new Map();
  const own = [];
  for (const [sensor, series] of record.readings) {
    const oneValue = series.columns.length === 3;
    if (oneValue && record.stateNames?.includes(sensor)) byState.set(sensor, [...(byState.get(sensor) ?? []), sensor]);
    else own.push(sensor);
  }
  return { byState, own };
}

/** Readings of a sensor split into accepted and refused columns of value `valueIndex`. */
function readingsTable(series, valueIndex, sinceS) {
  const acceptedCol = series.columns.length - 1;
  const [t, v, ok] = series.toArrays([valueIndex, acceptedCol], sinceS);
  return [t, v.map((x, i) => (ok[i] === 1 ? x : null)), v.map((x, i) => (ok[i] === 1 ? null : x))];
}

/**
 * State component `i`: `[x, filtered, +2σ, −2σ, smoothed, (accepted, refused) per sensor]`
 * and a value range that follows the estimates, so the wide band of a fresh track does not
 * flatten everything else.
 */
export function stateChartData(record, i, sensors, sinceS) {
  const [t, x, sigma] = record.filtered.toArrays([2 * i, 2 * i + 1], sinceS);
  const hi = x.map((v, k) => (v === null || sigma[k] === null ? null : v + 2 * sigma[k]));
  const lo = x.map((v, k) => (v === null || sigma[k] === null ? null : v - 2 * sigma[k]));
  const smoothed = record.smoothed.toArrays([i], sinceS);
  const readings = sensors.map((s) => readingsTable(record.readings.get(s), 0, sinceS));
  const data = alignTables([[t, x, hi, lo], smoothed, ...readings]);
  const values = [x, smoothed[1], ...readings.map((r) => r[1])];
  return { data, range: followRange(values, sigma) };
}

/** A sensor's own readings (value `valueIndex`): `[x, accepted, refused]`. */
export function readingsChartData(record, sensor, valueIndex, sinceS) {
  const table = readingsTable(record.readings.get(sensor), valueIndex, sinceS);
  // With no estimate to compare against, refused readings are the point: keep them in view.
  return { data: table, range: followRange([table[1], table[2]], []) };
}

/**
 * A sensor's NIS: `[x, windowed mean, band low, band high, reading NIS, refused NIS]`. The
 * band comes from the latest detail answer; the range keeps the band in view and reaches up
 * to 25 × its upper bound for large NIS values, so a few extreme ones go off the top rather
 * than squash the band.
 */
export function nisChartData(record, sensor, sinceS) {
  const polled = record.nisPolled.get(sensor)?.toArrays([0], sinceS) ?? [[], []];
  const series = record.readings.get(sensor);
  const nis = series === undefined ? [[], [], []] : nisTable(series, sinceS);
  const data = alignTables([polled, nis]);
  const band = record.sensors.get(sensor)?.nisBand;
  const [lo, hi] = Array.isArray(band) ? band : [null, null];
  data.splice(2, 0, data[0].map(() => lo), data[0].map(() => hi));
  const h = hi ?? 1;
  const top = Math.max(2.5 * h, 1.2 * maxOf(polled[1]), 1.05 * Math.min(Math.max(maxOf(nis[1]), maxOf(nis[2])), 25 * h));
  return { data, range: [0, top] };
}

function nisTable(series, sinceS) {
  const nisCol = series.columns.length - 2;
  const [t, nis, ok] = series.toArrays([nisCol, nisCol + 1], sinceS);
  return [t, nis.map((v, i) => (ok[i] === 1 ? v : null)), nis.map((v, i) => (ok[i] === 1 ? null : v))];
}

/** trace(P) over time: `[x, trace]`. */
export function traceChartData(record, sinceS) {
  const traceCol = record.filtered.columns.length - 1;
  return { data: record.filtered.toArrays([traceCol], sinceS) };
}

/** Gate rejections to mark: `[times, counts]`. */
export function rejectionMarks(record, sinceS) {
  return record.rejections.toArrays([0], sinceS);
}

function maxOf(values) {
  let m = -Infinity;
  for (const v of values) if (v !== null && v > m) m = v;
  return m;
}

/** Range around `values` with room for about 2.5 typical σ either side; null when empty. */
export function followRange(values, sigma) {
  let min = Infinity;
  let max = -Infinity;
  for (const column of values) {
    for (const v of column) {
      if (v === null || v === undefined) continue;
      if (v < min) min = v;
      if (v > max) max = v;
    }
  }
  if (min > max) return null;
  const s = median(sigma);
  const span = max - min;
  const pad = Math.max(2.5 * s, 0.08 * span, 1e-9 * Math.max(1, Math.abs(max)));
  return [min - pad, max + pad];
}

function median(values) {
  const finite = values.filter((v) => v !== null && Number.isFinite(v)).sort((a, b) => a - b);
  return finite.length === 0 ? 0 : finite[Math.floor(finite.length / 2)];
}
