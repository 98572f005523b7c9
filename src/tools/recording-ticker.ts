/**
 * The daemon's periodic jobs (health evaluation, idle eviction, fixed-rate publishing) driven
 * by recording time instead of timers, so a replay runs as fast as the CPU allows and the same
 * input always gives the same ticks.
 */

/** A job run every periodMs of recording time. */
export interface TickJob {
  readonly periodMs: number;
  run(nowMs: number): void;
}

/** Ticks caught up at most per job and gap; a longer silence jumps to its end (a latch would saturate anyway). */
const MAX_CATCH_UP = 100_000;

/** Runs each job at every multiple of its period after the first message's time. */
export class RecordingTicker {
  private readonly next: number[];
  private anchored = false;

  /** Jobs in the order ties are run. */
  constructor(private readonly jobs: readonly TickJob[]) {
    this.next = jobs.map(() => Number.NaN);
  }

  /** Runs every tick due at or before tMs, in time order (ties in job order). */
  advance(tMs: number): void {
    if (!this.anchored) {
      this.anchored = true;
      this.jobs.forEach((job, i) => (this.next[i] = tMs + job.periodMs));
      return;
    }
    for (let i = 0; i < this.jobs.length; i++) {
      const period = this.jobs[i]!.periodMs;
      const behind = (tMs - this.next[i]!) / period;
      if (behind > MAX_CATCH_UP) this.next[i] = this.next[i]! + Math.floor(behind - MAX_CATCH_UP) * period;
    }
    for (;;) {
      let due = -1;
      for (let i = 0; i < this.jobs.length; i++) {
        const t = this.next[i]!;
        if (t <= tMs && (due < 0 || t < this.next[due]!)) due = i;
      }
      if (due < 0) return;
      const at = this.next[due]!;
      this.next[due] = at + this.jobs[due]!.periodMs;
      this.jobs[due]!.run(at);
    }
  }
}
