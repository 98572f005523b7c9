/**
 * Keeps plots of long series small: the time axis is cut into buckets and each bucket keeps
 * only its minimum and maximum (in time order), so a spike or a dip survives any amount of
 * thinning and a plot never holds more than two points per bucket.
 */

/** Points of a decimated series, in time order. */
export interface PlotPoints {
  readonly t: number[];
  readonly y: number[];
}

/** The time span shared by a plot's series. */
export interface TimeSpan {
  readonly t0: number;
  readonly t1: number;
}

function bucketOf(t: number, span: TimeSpan, buckets: number): number {
  const w = span.t1 - span.t0;
  if (!(w > 0)) return 0;
  return Math.min(buckets - 1, Math.max(0, Math.floor(((t - span.t0) / w) * buckets)));
}

/**
 * Min/max decimation of (t[i], y(i)) for i < count, finite values only. With count ≤ 2·buckets
 * the points are kept as they are (sorted by time).
 */
export function decimateMinMax(t: (i: number) => number, y: (i: number) => number, count: number, span: TimeSpan, buckets: number): PlotPoints {
  if (count <= 2 * buckets) {
    const idx: number[] = [];
    for (let i = 0; i < count; i++) if (Number.isFinite(t(i)) && Number.isFinite(y(i))) idx.push(i);
    idx.sort((a, b) => t(a) - t(b) || a - b);
    return { t: idx.map(t), y: idx.map(y) };
  }
  const lo = new Int32Array(buckets).fill(-1);
  const hi = new Int32Array(buckets).fill(-1);
  for (let i = 0; i < count; i++) {
    const v = y(i);
    const ti = t(i);
    if (!Number.isFinite(v) || !Number.isFinite(ti)) continue;
    const b = bucketOf(ti, span, buckets);
    if (lo[b]! < 0 || v < y(lo[b]!)) lo[b] = i;
    if (hi[b]! < 0 || v > y(hi[b]!)) hi[b] = i;
  }
  const out: PlotPoints = { t: [], y: [] };
  for (let b = 0; b < buckets; b++) {
    const a = lo[b]!;
    const c = hi[b]!;
    if (a < 0) continue;
    const [first, second] = t(a) <= t(c) ? [a, c] : [c, a];
    out.t.push(t(first));
    out.y.push(y(first));
    if (second !== first) {
      out.t.push(t(second));
      out.y.push(y(second));
    }
  }
  return out;
}

/** An envelope (band) per bucket: lowest lower edge and highest upper edge, at the bucket's mean time. */
export interface PlotBand {
  readonly t: number[];
  readonly lower: number[];
  readonly upper: number[];
}

/** Decimates a band [lower(i), upper(i)] at t(i) to at most `buckets` steps (kept as is when short). */
export function decimateBand(
  t: (i: number) => number, lower: (i: number) => number, upper: (i: number) => number, count: number, span: TimeSpan, buckets: number,
): PlotBand {
  const out: PlotBand = { t: [], lower: [], upper: [] };
  if (count <= buckets) {
    for (let i = 0; i < count; i++) {
      if (!Number.isFinite(t(i)) || !Number.isFinite(lower(i)) || !Number.isFinite(upper(i))) continue;
      out.t.push(t(i));
      out.lower.push(lower(i));
      out.upper.push(upper(i));
    }
    return out;
  }
  const lo = new Float64Array(buckets).fill(Infinity);
  const hi = new Float64Array(buckets).fill(-Infinity);
  const tSum = new Float64Array(buckets);
  const n = new Float64Array(buckets);
  for (let i = 0; i < count; i++) {
    const ti = t(i);
    const a = lower(i);
    const c = upper(i);
    if (!Number.isFinite(ti) || !Number.isFinite(a) || !Number.isFinite(c)) continue;
    const b = bucketOf(ti, span, buckets);
    lo[b] = Math.min(lo[b]!, a);
    hi[b] = Math.max(hi[b]!, c);
    tSum[b] = tSum[b]! + ti;
    n[b] = n[b]! + 1;
  }
  for (let b = 0; b < buckets; b++) {
    if (n[b] === 0) continue;
    out.t.push(tSum[b]! / n[b]!);
    out.lower.push(lo[b]!);
    out.upper.push(hi[b]!);
  }
  return out;
}
