/**
 * The bounded, time-ordered record of one track's applied measurements, plus sparse snapshots
 * of the filter state, so that a late measurement can be inserted and the track re-filtered
 * from just before it.
 *
 * Storing every measurement and only every K-th state (instead of a full x, P for each entry)
 * keeps a 4-state track with 64 entries near 5 KB. Snapshot j holds the state *before* entry
 * j·K; eviction drops whole chunks of K entries, so entry 0 always has a snapshot.
 */
export class TrackHistory {
  /** Entries: [tS, sensorIndex, hasR, y_0..y_{M−1}, R upper triangle] per slot. */
  readonly entries: Float64Array;
  /** Snapshots: [tS, initialized, x_0..x_{P−1}, P upper triangle] per slot. */
  readonly snapshots: Float64Array;
  readonly entryStride: number;
  readonly snapshotStride: number;
  readonly capacity: number;
  readonly snapshotEvery: number;
  /** Number of entries held. */
  count = 0;
  /** Number of entries dropped since the track began. */
  evicted = 0;
  /**
   * Time before which the record is gone (the last evicted entry, or the moment of a
   * re-initialization): data at or before it can no longer be placed in order, so it is too late.
   */
  baseTimeS = Number.NEGATIVE_INFINITY;

  /** Sizes the buffers once: capacity is rounded up to a multiple of snapshotEvery. */
  constructor(readonly stateDim: number, readonly maxM: number, maxEntries: number, snapshotEvery: number) {
    if (!Number.isInteger(maxEntries) || maxEntries < 1) throw new Error(`history.maxEntries must be a positive integer, got ${maxEntries}`);
    this.snapshotEvery = Math.max(1, Math.min(snapshotEvery, maxEntries));
    this.capacity = Math.ceil(maxEntries / this.snapshotEvery) * this.snapshotEvery;
    this.entryStride = 3 + maxM + (maxM * (maxM + 1)) / 2;
    this.snapshotStride = 2 + stateDim + (stateDim * (stateDim + 1)) / 2;
    this.entries = new Float64Array(this.capacity * this.entryStride);
    this.snapshots = new Float64Array((this.capacity / this.snapshotEvery) * this.snapshotStride);
  }

  /** Time of entry i. */
  timeAt(i: number): number {
    return this.entries[i * this.entryStride]!;
  }

  /** Sensor index of entry i. */
  sensorAt(i: number): number {
    return this.entries[i * this.entryStride + 1]!;
  }

  /**
   * Compares a candidate (t, sensor, y) with entry i in the deterministic processing order:
   * time, then sensor order, then the values (so simultaneous readings always apply alike).
   */
  compareWith(i: number, tS: number, sensor: number, y: Float64Array, m: number): number {
    const base = i * this.entryStride;
    const e = this.entries;
    if (tS !== e[base]!) return tS < e[base]! ? -1 : 1;
    if (sensor !== e[base + 1]!) return sensor < e[base + 1]! ? -1 : 1;
    for (let k = 0; k < m; k++) {
      const v = e[base + 3 + k]!;
      if (y[k]! !== v) return y[k]! < v ? -1 : 1;
    }
    return 0;
  }

  /** Index at which (t, sensor, y) belongs; `-1 - index` of an identical entry when there is one. */
  insertionIndex(tS: number, sensor: number, y: Float64Array, m: number): number {
    if (this.count === 0) return 0;
    const last = this.compareWith(this.count - 1, tS, sensor, y, m);
    if (last > 0) return this.count;
    if (last === 0) return -1 - (this.count - 1);
    let lo = 0;
    let hi = this.count - 1;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      const c = this.compareWith(mid, tS, sensor, y, m);
      if (c === 0) return -1 - mid;
      if (c > 0) lo = mid + 1;
      else hi = mid;
    }
    return lo;
  }

  /** True when the buffer is full and the next insert must first evict a chunk. */
  get full(): boolean {
    return this.count === this.capacity;
  }

  /** Drops the oldest chunk of snapshotEvery entries and its snapshot. */
  evictOldestChunk(): void {
    const k = this.snapshotEvery;
    const drop = Math.min(k, this.count);
    if (drop > 0) this.baseTimeS = this.timeAt(drop - 1);
    this.entries.copyWithin(0, drop * this.entryStride, this.count * this.entryStride);
    const snaps = Math.ceil(this.count / k);
    this.snapshots.copyWithin(0, this.snapshotStride, snaps * this.snapshotStride);
    this.count -= drop;
    this.evicted += drop;
  }

  /** Opens slot i (shifting later entries right) and writes the entry into it. */
  insertAt(i: number, tS: number, sensor: number, y: Float64Array, m: number, R: Float64Array | null): void {
    const s = this.entryStride;
    if (i < this.count) this.entries.copyWithin((i + 1) * s, i * s, this.count * s);
    const base = i * s;
    const e = this.entries;
    e[base] = tS;
    e[base + 1] = sensor;
    e[base + 2] = R === null ? 0 : 1;
    for (let k = 0; k < m; k++) e[base + 3 + k] = y[k]!;
    if (R !== null) {
      let t = base + 3 + this.maxM;
      for (let r = 0; r < m; r++) for (let c = r; c < m; c++) e[t++] = R[r * m + c]!;
    }
    this.count += 1;
  }

  /** Removes entry i (used when a stored measurement can no longer be applied). */
  removeAt(i: number): void {
    const s = this.entryStride;
    this.entries.copyWithin(i * s, (i + 1) * s, this.count * s);
    this.count -= 1;
  }

  /** Copies entry i's measurement into y (m values) and, when it carried its own, R; returns hasR. */
  readEntry(i: number, m: number, y: Float64Array, R: Float64Array): boolean {
    const base = i * this.entryStride;
    const e = this.entries;
    for (let k = 0; k < m; k++) y[k] = e[base + 3 + k]!;
    if (e[base + 2]! === 0) return false;
    let t = base + 3 + this.maxM;
    for (let r = 0; r < m; r++) {
      for (let c = r; c < m; c++) {
        const v = e[t++]!;
        R[r * m + c] = v;
        R[c * m + r] = v;
      }
    }
    return true;
  }

  /** Stores the state before entry j·K as snapshot j. */
  writeSnapshot(j: number, tS: number, initialized: boolean, x: Float64Array, P: Float64Array): void {
    const n = this.stateDim;
    let t = j * this.snapshotStride;
    const sn = this.snapshots;
    sn[t++] = tS;
    sn[t++] = initialized ? 1 : 0;
    for (let i = 0; i < n; i++) sn[t++] = x[i]!;
    for (let r = 0; r < n; r++) for (let c = r; c < n; c++) sn[t++] = P[r * n + c]!;
  }

  /** Restores snapshot j into x and P; returns its time, or NaN when the state was not yet initialized. */
  readSnapshot(j: number, x: Float64Array, P: Float64Array): number {
    const n = this.stateDim;
    let t = j * this.snapshotStride;
    const sn = this.snapshots;
    const tS = sn[t++]!;
    const initialized = sn[t++]! === 1;
    for (let i = 0; i < n; i++) x[i] = sn[t++]!;
    for (let r = 0; r < n; r++) {
      for (let c = r; c < n; c++) {
        const v = sn[t++]!;
        P[r * n + c] = v;
        P[c * n + r] = v;
      }
    }
    return initialized ? tS : Number.NaN;
  }

  /** Forgets every entry and snapshot (after a re-initialization at baseTimeS). */
  clear(baseTimeS: number): void {
    this.count = 0;
    this.baseTimeS = baseTimeS;
  }
}
