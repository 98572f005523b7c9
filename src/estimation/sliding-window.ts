/**
 * Fixed-length sliding windows over the most recent values, preallocated, O(1) per push and
 * allocation-free: a running mean of numbers and a running share of yes/no outcomes. Callers
 * validate the length (an integer ≥ 1) before constructing.
 */

// A leaving value this much larger than what remains would leave mostly rounding in the running
// sum, so the window is re-summed at once instead of waiting for the periodic re-sum.
const CANCELLATION_RATIO = 2 ** 20;

/** The last `length` numbers with their running sum and mean. */
export class SlidingMeanWindow {
  /** Capacity of the window. */
  readonly length: number;
  private readonly ring: Float64Array;
  private next = 0;
  private filled = 0;
  private sum = 0;
  private pushesSinceResum = 0;

  /** Preallocates a window of `length` values (an integer ≥ 1). */
  constructor(length: number) {
    this.length = length;
    this.ring = new Float64Array(length);
  }

  /** Values held now (0..length). */
  get fill(): number {
    return this.filled;
  }

  /** Mean of the values held; NaN while empty. */
  get mean(): number {
    return this.filled === 0 ? Number.NaN : this.sum / this.filled;
  }

  /** Adds a value (finite, for the mean to stay finite), dropping the oldest when full. */
  push(value: number): void {
    let leaving = 0;
    if (this.filled === this.length) leaving = this.ring[this.next]!;
    else this.filled += 1;
    this.ring[this.next] = value;
    this.sum += value - leaving;
    this.next = this.next + 1 === this.length ? 0 : this.next + 1;
    this.pushesSinceResum += 1;
    // Re-sum once per window length (amortized O(1)) so add/subtract rounding cannot build up.
    if (this.pushesSinceResum >= this.length || leaving > CANCELLATION_RATIO * Math.abs(this.sum)) this.resum();
  }

  /** The k-th oldest value held (k in 0..fill). */
  at(k: number): number {
    return this.ring[(this.next - this.filled + k + this.length) % this.length]!;
  }

  private resum(): void {
    // The ring fills from slot 0 and never empties, so the live values are slots 0..fill.
    let sum = 0;
    for (let i = 0; i < this.filled; i++) sum += this.ring[i]!;
    this.sum = sum;
    this.pushesSinceResum = 0;
  }
}

/** The last `length` yes/no outcomes with the count and share of yes. */
export class SlidingShareWindow {
  /** Capacity of the window. */
  readonly length: number;
  private readonly ring: Uint8Array;
  private next = 0;
  private filled = 0;
  private yes = 0;

  /** Preallocates a window of `length` outcomes (an integer ≥ 1). */
  constructor(length: number) {
    this.length = length;
    this.ring = new Uint8Array(length);
  }

  /** Outcomes held now (0..length). */
  get fill(): number {
    return this.filled;
  }

  /** Share of yes among the outcomes held; NaN while empty. Exact: the count is an integer. */
  get share(): number {
    return this.filled === 0 ? Number.NaN : this.yes / this.filled;
  }

  /** Adds an outcome, dropping the oldest when full. */
  push(yes: boolean): void {
    if (this.filled === this.length) this.yes -= this.ring[this.next]!;
    else this.filled += 1;
    const bit = yes ? 1 : 0;
    this.ring[this.next] = bit;
    this.yes += bit;
    this.next = this.next + 1 === this.length ? 0 : this.next + 1;
  }

  /** The k-th oldest outcome held (k in 0..fill). */
  at(k: number): boolean {
    return this.ring[(this.next - this.filled + k + this.length) % this.length] === 1;
  }
}
