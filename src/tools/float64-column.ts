/**
 * A growable column of float64 values with a fixed stride (values per row), for the per-entity
 * series a replay keeps for smoothing and reports: one typed array that doubles when full,
 * so a long run costs 8 bytes per value rather than an object per sample.
 */
export class Float64Column {
  /** Rows held. */
  length = 0;
  private data: Float64Array;

  /** An empty column of `stride` values per row. */
  constructor(readonly stride = 1, initialRows = 256) {
    this.data = new Float64Array(Math.max(1, initialRows) * stride);
  }

  /** Appends one row of a single value (stride 1). */
  push(v: number): void {
    if ((this.length + 1) * this.stride > this.data.length) this.grow();
    this.data[this.length * this.stride] = v;
    this.length += 1;
  }

  /** Appends one row: the first `count` values of `values`, the rest of the row NaN. */
  pushRow(values: ArrayLike<number>, count: number = this.stride): void {
    if ((this.length + 1) * this.stride > this.data.length) this.grow();
    const base = this.length * this.stride;
    for (let i = 0; i < this.stride; i++) this.data[base + i] = i < count ? values[i]! : Number.NaN;
    this.length += 1;
  }

  /** Value `k` of row `row`. */
  at(row: number, k = 0): number {
    return this.data[row * this.stride + k]!;
  }

  /** A view of one row (valid until the next push). */
  row(row: number): Float64Array {
    return this.data.subarray(row * this.stride, (row + 1) * this.stride);
  }

  private grow(): void {
    const bigger = new Float64Array(this.data.length * 2);
    bigger.set(this.data);
    this.data = bigger;
  }
}
