/**
 * Row-wise nonzero patterns of small dense matrices, rebuilt from the values themselves.
 *
 * Transitions and sensor matrices are mostly zeros (a constant-velocity A has 6 nonzeros of 16,
 * a position sensor's C has 2 of 8). Scanning the values each step costs rows·cols comparisons,
 * far less than the multiplications it saves, and can never go stale when A changes with dt.
 * The kernels hoist every array into a local: V8 then keeps them in registers. The filters use
 * them past the size limit of their generated straight-line kernels (kernel-cache.ts), which
 * avoid the index indirection altogether.
 */
export class RowPattern {
  /** Column indices of the nonzeros, row after row. */
  readonly cols: Int32Array;
  /** rowStart[i]..rowStart[i+1] indexes `cols` for row i. */
  readonly rowStart: Int32Array;

  /** Allocates room for a rows×cols matrix (setup time). */
  constructor(readonly rows: number, readonly colsCount: number) {
    this.cols = new Int32Array(rows * colsCount);
    this.rowStart = new Int32Array(rows + 1);
  }

  /** Rebuilds the pattern from the values of m (rows×colsCount, row-major). */
  scan(m: Float64Array): void {
    const cols = this.cols;
    const rowStart = this.rowStart;
    const c = this.colsCount;
    const rows = this.rows;
    let k = 0;
    for (let i = 0; i < rows; i++) {
      rowStart[i] = k;
      const base = i * c;
      for (let j = 0; j < c; j++) if (m[base + j] !== 0) cols[k++] = j;
    }
    rowStart[rows] = k;
  }
}

/** out (r×n) = a (r×k, pattern pa) · b (k×n dense). */
export function sparseTimesDenseInto(
  a: Float64Array, pa: RowPattern, b: Float64Array, n: number, out: Float64Array,
): void {
  const k = pa.colsCount;
  const rows = pa.rows;
  const rowStart = pa.rowStart;
  const cols = pa.cols;
  for (let i = 0; i < rows; i++) {
    const oi = i * n;
    for (let j = 0; j < n; j++) out[oi + j] = 0;
    const end = rowStart[i + 1]!;
    for (let t = rowStart[i]!; t < end; t++) {
      const col = cols[t]!;
      const v = a[i * k + col]!;
      const bi = col * n;
      for (let j = 0; j < n; j++) out[oi + j] = out[oi + j]! + v * b[bi + j]!;
    }
  }
}

/** out (n×r) = b (n×k dense) · aᵀ where a is (r×k, pattern pa). */
export function denseTimesSparseTransposedInto(
  b: Float64Array, n: number, a: Float64Array, pa: RowPattern, out: Float64Array,
): void {
  const k = pa.colsCount;
  const r = pa.rows;
  const rowStart = pa.rowStart;
  const cols = pa.cols;
  for (let i = 0; i < n; i++) {
    const bi = i * k;
    for (let j = 0; j < r; j++) {
      let s = 0;
      const end = rowStart[j + 1]!;
      const aj = j * k;
      for (let t = rowStart[j]!; t < end; t++) {
        const col = cols[t]!;
        s += b[bi + col]! * a[aj + col]!;
      }
      out[i * r + j] = s;
    }
  }
}

/**
 * out (n×n, symmetric) = b (n×k) · aᵀ for a (n×k, pattern pa), computing only the upper
 * triangle and mirroring it. Valid when the product is known to be symmetric, as A·P·Aᵀ is.
 */
export function symmetricDenseTimesSparseTransposedInto(
  b: Float64Array, a: Float64Array, pa: RowPattern, out: Float64Array,
): void {
  const n = pa.rows;
  const k = pa.colsCount;
  const rowStart = pa.rowStart;
  const cols = pa.cols;
  for (let i = 0; i < n; i++) {
    const bi = i * k;
    for (let j = i; j < n; j++) {
      let s = 0;
      const end = rowStart[j + 1]!;
      const aj = j * k;
      for (let t = rowStart[j]!; t < end; t++) {
        const col = cols[t]!;
        s += b[bi + col]! * a[aj + col]!;
      }
      out[i * n + j] = s;
      out[j * n + i] = s;
    }
  }
}

/** out (r) = a (r×k, pattern pa) · v (k). */
export function sparseTimesVectorInto(a: Float64Array, pa: RowPattern, v: Float64Array, out: Float64Array): void {
  const k = pa.colsCount;
  const rows = pa.rows;
  const rowStart = pa.rowStart;
  const cols = pa.cols;
  for (let i = 0; i < rows; i++) {
    let s = 0;
    const end = rowStart[i + 1]!;
    for (let t = rowStart[i]!; t < end; t++) {
      const col = cols[t]!;
      s += a[i * k + col]! * v[col]!;
    }
    out[i] = s;
  }
}
