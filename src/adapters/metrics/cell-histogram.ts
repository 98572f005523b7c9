/**
 * A prom-client Histogram whose observations land in plain cells (see label-cells.ts): per
 * label set, a count per bucket, a sum and a count, read out in the exposition format's
 * cumulative `_bucket{le=...}`, `_sum` and `_count` series at scrape time. prom-client's own
 * observe builds a label object and hashes it per call (over a microsecond here), which at
 * thousands of measurements a second is a measurable share of the daemon's CPU.
 *
 * Only `cell(...).observe(value)` feeds it: the inherited `observe(labels, value)` writes to
 * prom-client's own table, which this class does not expose.
 */
import { Histogram, type MetricObjectWithValues, type MetricValueWithName, type Registry } from 'prom-client';
import { LabelCells } from './label-cells.js';

/** One label set's buckets. */
export class HistogramCell {
  /** counts[i]: observations in (bounds[i-1], bounds[i]]; the last slot is above every bound. */
  readonly counts: Float64Array;
  sum = 0;
  count = 0;

  constructor(
    readonly labels: Readonly<Record<string, string>>,
    private readonly bounds: Float64Array,
  ) {
    this.counts = new Float64Array(bounds.length + 1);
  }

  /** Records one finite value (a non-finite one is ignored, as it would poison the sum). */
  observe(value: number): void {
    if (!Number.isFinite(value)) return;
    const bounds = this.bounds;
    let i = 0;
    while (i < bounds.length && value > bounds[i]!) i++;
    this.counts[i]! += 1;
    this.sum += value;
    this.count += 1;
  }
}

/** Options of {@link CellHistogram}. */
export interface CellHistogramOptions {
  readonly name: string;
  readonly help: string;
  /** One to three label names. */
  readonly labelNames: readonly string[];
  /** Upper bounds in increasing order (`+Inf` is implied). */
  readonly buckets: readonly number[];
  readonly registry: Registry;
}

type Values = MetricObjectWithValues<MetricValueWithName<string>>;

/** The histogram; `cells.cell(a).observe(v)` records. */
export class CellHistogram extends Histogram<string> {
  readonly cells: LabelCells<HistogramCell>;
  private readonly upper: Float64Array;
  private readonly metricName: string;
  private readonly metricHelp: string;

  constructor(options: CellHistogramOptions) {
    super({ name: options.name, help: options.help, labelNames: [...options.labelNames], buckets: [...options.buckets], registers: [options.registry] });
    const upper = Float64Array.from(options.buckets);
    this.upper = upper;
    this.metricName = options.name;
    this.metricHelp = options.help;
    this.cells = new LabelCells(options.labelNames, (labels) => new HistogramCell(labels, upper));
  }

  /** The series of every label set observed so far. */
  override async get(): Promise<Values> {
    const values: MetricValueWithName<string>[] = [];
    const name = this.metricName;
    const bucket = `${name}_bucket`;
    // le first, as prom-client's own histogram writes it.
    for (const c of this.cells.cells()) {
      let cumulative = 0;
      for (let i = 0; i < this.upper.length; i++) {
        cumulative += c.counts[i]!;
        values.push({ metricName: bucket, labels: { le: this.upper[i]!, ...c.labels }, value: cumulative });
      }
      values.push({ metricName: bucket, labels: { le: '+Inf', ...c.labels }, value: c.count });
      values.push({ metricName: `${name}_sum`, labels: { ...c.labels }, value: c.sum });
      values.push({ metricName: `${name}_count`, labels: { ...c.labels }, value: c.count });
    }
    // prom-client's typing lists `collect` on this result; its own histograms do not return it.
    return { name, help: this.metricHelp, type: 'histogram', values, aggregator: 'sum' } as unknown as Values;
  }

  /** The registry asks for this form first (untyped in prom-client); it is the same here. */
  getForPromString(): Promise<Values> {
    return this.get();
  }

  /** Zeroes every cell (label sets stay known). */
  override reset(): void {
    super.reset();
    for (const c of this.cells?.cells() ?? []) {
      c.counts.fill(0);
      c.sum = 0;
      c.count = 0;
    }
  }
}
