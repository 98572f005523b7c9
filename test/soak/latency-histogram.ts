/**
 * A fixed-size latency histogram with buckets 1% wide from 10 µs to 100 s, so a soak of hours
 * keeps percentiles without keeping samples. Percentiles are read as the upper edge of their
 * bucket (at most 1% high); the maximum is exact.
 */
const MIN_MS = 0.01;
const GROWTH = 1.01;
const LOG_GROWTH = Math.log(GROWTH);
const BUCKETS = Math.ceil(Math.log(100_000 / MIN_MS) / LOG_GROWTH) + 1;

/** See the module comment. */
export class LatencyHistogram {
  private readonly counts = new Float64Array(BUCKETS);
  private total = 0;
  private maxMs = 0;

  /** Records one latency in milliseconds (negative values, from clock noise, count as 0). */
  record(ms: number): void {
    const v = ms > MIN_MS ? ms : MIN_MS;
    const i = Math.min(BUCKETS - 1, Math.floor(Math.log(v / MIN_MS) / LOG_GROWTH));
    this.counts[i]! += 1;
    this.total += 1;
    if (ms > this.maxMs) this.maxMs = ms;
  }

  /** Samples recorded. */
  get count(): number {
    return this.total;
  }

  /** Largest latency recorded (ms), 0 when empty. */
  get max(): number {
    return this.maxMs;
  }

  /** The latency (ms) at or below which fraction q (0..1) of samples lie; NaN when empty. */
  percentile(q: number): number {
    if (this.total === 0) return Number.NaN;
    const rank = Math.max(1, Math.ceil(q * this.total));
    let seen = 0;
    for (let i = 0; i < BUCKETS; i++) {
      seen += this.counts[i]!;
      if (seen >= rank) return Math.min(this.maxMs, MIN_MS * GROWTH ** (i + 1));
    }
    return this.maxMs;
  }
}
