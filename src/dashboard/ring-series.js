/**
 * A bounded time series for the browser: a ring of columns (Float64Array), so memory stays
 * fixed however long the page runs. Points are kept while they are among the newest
 * `capacity` and no older than `maxAgeS` behind the newest one.
 *
 * Time must not go backwards within one series (charts need sorted x): a point older than the
 * newest is dropped, one at the same time replaces the newest (a republished step).
 */
export class RingSeries {
  /**
   * @param {number} columnCount values per point, besides the time
   * @param {number} capacity most points kept
   * @param {number} maxAgeS oldest point kept, in seconds behind the newest
   */
  constructor(columnCount, capacity, maxAgeS) {
    this.capacity = capacity;
    this.maxAgeS = maxAgeS;
    this.times = new Float64Array(capacity);
    this.columns = Array.from({ length: columnCount }, () => new Float64Array(capacity));
    this.start = 0;
    this.length = 0;
  }

  /** The newest time, or NaN when empty. */
  get lastTimeS() {
    return this.length === 0 ? NaN : this.times[(this.start + this.length - 1) % this.capacity];
  }

  /** The oldest time kept in the ring, or NaN when empty. */
  get firstTimeS() {
    return this.length === 0 ? NaN : this.times[this.start];
  }

  /** The newest value of column `c`, or NaN when empty. */
  lastValue(c) {
    return this.length === 0 ? NaN : this.columns[c][(this.start + this.length - 1) % this.capacity];
  }

  /**
   * Adds one point; `values[i]` null or missing is stored as a gap.
   * @param {number} tS @param {ArrayLike<number | null | undefined>} values
   * @returns {boolean} whether the point was kept
   */
  push(tS, values) {
    if (!Number.isFinite(tS)) return false;
    const last = this.lastTimeS;
    if (tS < last) return false;
    let slot;
    if (tS === last) slot = (this.start + this.length - 1) % this.capacity;
    else if (this.length < this.capacity) slot = (this.start + this.length++) % this.capacity;
    else {
      slot = this.start;
      this.start = (this.start + 1) % this.capacity;
    }
    this.times[slot] = tS;
    for (let c = 0; c < this.columns.length; c++) {
      const v = values[c];
      this.columns[c][slot] = typeof v === 'number' ? v : NaN;
    }
    return true;
  }

  /** Forgets every point. */
  clear() {
    this.start = 0;
    this.length = 0;
  }

  /**
   * The points within `maxAgeS` of the newest, oldest first, as plain arrays for a chart:
   * `[times, column0, column1, ...]`; gaps (NaN, ±Infinity) become null.
   * @param {readonly number[]} [pick] indices of the columns wanted (default all)
   * @param {number} [sinceS] leave out points before this time too
   * @returns {(number | null)[][]}
   */
  toArrays(pick, sinceS = -Infinity) {
    const cols = pick ?? this.columns.map((_, i) => i);
    const out = [[], ...cols.map(() => [])];
    const oldest = Math.max(this.lastTimeS - this.maxAgeS, sinceS);
    for (let k = 0; k < this.length; k++) {
      const slot = (this.start + k) % this.capacity;
      const t = this.times[slot];
      if (t < oldest) continue;
      out[0].push(t);
      for (let j = 0; j < cols.length; j++) {
        const v = this.columns[cols[j]][slot];
        out[j + 1].push(Number.isFinite(v) ? v : null);
      }
    }
    return out;
  }
}
