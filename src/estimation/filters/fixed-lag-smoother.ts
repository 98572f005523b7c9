import { RtsWorkspace, rtsSmoothStepInto } from './rts-smoother.js';

/** One ring slot: a filter step and the prediction that led into it. */
interface LagSlot {
  tS: number;
  readonly xFiltered: Float64Array;
  readonly PFiltered: Float64Array;
  readonly xPredicted: Float64Array;
  readonly PPredicted: Float64Array;
  readonly A: Float64Array;
}

/**
 * Fixed-lag smoother: x̂(k−L|k) and its covariance, by the RTS backward pass (Rauch, Tung,
 * Striebel 1965) over a ring of the last L + 1 filter steps. The ring is allocated at
 * construction; push and smoothedInto allocate nothing.
 *
 * Until the ring holds L + 1 steps (after construction, reset or truncateAfter), smoothedInto
 * reports the oldest step it holds, with a shorter lag of filledSteps − 1; that is the RTS
 * estimate on the data pushed so far.
 */
export class FixedLagSmoother {
  readonly n: number;
  readonly lagSteps: number;
  /** Steps in the backward pass of the last smoothedInto that fell back to the filtered estimate. */
  lastPassRestarts = 0;
  private readonly slots: LagSlot[];
  private readonly sws: RtsWorkspace;
  /** Ring index of the newest step. */
  private newest = -1;
  private filled = 0;

  /** Allocates the ring of lagSteps + 1 steps for n states; throws for a bad n or lag. */
  constructor(n: number, lagSteps: number) {
    if (!Number.isInteger(n) || n < 1) throw new Error(`FixedLagSmoother: state dimension must be a positive integer, got ${n}`);
    if (!Number.isInteger(lagSteps) || lagSteps < 0) throw new Error(`FixedLagSmoother: lag must be a non-negative integer of steps, got ${lagSteps}`);
    this.n = n;
    this.lagSteps = lagSteps;
    this.sws = new RtsWorkspace(n);
    this.slots = Array.from({ length: lagSteps + 1 }, () => ({
      tS: Number.NaN,
      xFiltered: new Float64Array(n),
      PFiltered: new Float64Array(n * n),
      xPredicted: new Float64Array(n),
      PPredicted: new Float64Array(n * n),
      A: new Float64Array(n * n),
    }));
  }

  /** Number of steps held, 0 … lagSteps + 1; the lag is full at lagSteps + 1. */
  get filledSteps(): number {
    return this.filled;
  }

  /**
   * Records one filter step at tS (seconds): the prediction (xPredicted, PPredicted) into it,
   * the transition A from the previous step, and the filtered (xFiltered, PFiltered) after its
   * update. For a second update at the same time stamp pass A = I and the previous filtered
   * estimate as the prediction. For the first step the prediction is stored but never used
   * (the prior with A = I will do). Returns false, recording nothing, when tS is not finite or
   * earlier than the newest step held (call truncateAfter first when re-filtering late data).
   */
  push(
    tS: number,
    xPredicted: Float64Array, PPredicted: Float64Array, A: Float64Array,
    xFiltered: Float64Array, PFiltered: Float64Array,
  ): boolean {
    if (!Number.isFinite(tS)) return false;
    if (this.filled > 0 && tS < this.slots[this.newest]!.tS) return false;
    const cap = this.slots.length;
    this.newest = (this.newest + 1) % cap;
    const s = this.slots[this.newest]!;
    s.tS = tS;
    s.xPredicted.set(xPredicted);
    s.PPredicted.set(PPredicted);
    s.A.set(A);
    s.xFiltered.set(xFiltered);
    s.PFiltered.set(PFiltered);
    if (this.filled < cap) this.filled++;
    return true;
  }

  /**
   * The smoothed estimate of the oldest step held (x̂(k−L|k) once the lag is full) into xOut
   * (n) and POut (n×n); returns its time stamp, or NaN (writing nothing) when nothing is held.
   * A step whose prediction cannot be used (P_p not positive definite) restarts the backward
   * pass from its filtered estimate; lastPassRestarts counts such steps.
   */
  smoothedInto(xOut: Float64Array, POut: Float64Array): number {
    this.lastPassRestarts = 0;
    if (this.filled === 0) return Number.NaN;
    const cap = this.slots.length;
    let idx = this.newest;
    let s = this.slots[idx]!;
    xOut.set(s.xFiltered);
    POut.set(s.PFiltered);
    for (let k = 1; k < this.filled; k++) {
      const later = s;
      idx = (idx - 1 + cap) % cap;
      s = this.slots[idx]!;
      // rtsSmoothStepInto reads all inputs before writing, so it may smooth in place on the outputs.
      const ok = rtsSmoothStepInto(
        s.xFiltered, s.PFiltered, later.xPredicted, later.PPredicted, later.A, xOut, POut, xOut, POut, this.sws,
      );
      if (!ok) {
        this.lastPassRestarts++;
        xOut.set(s.xFiltered);
        POut.set(s.PFiltered);
      }
    }
    return s.tS;
  }

  /** Forgets every step. */
  reset(): void {
    this.newest = -1;
    this.filled = 0;
    this.lastPassRestarts = 0;
  }

  /**
   * Drops the steps later than tS (seconds), for re-filtering after late data; returns how many
   * were dropped. The steps kept are still valid, so the lag is full again once as many steps
   * as were dropped have been pushed: at most L after a truncation that keeps a step of a full
   * ring (L + 1 when everything is dropped). Until then smoothedInto reports a shorter lag;
   * filledSteps tells how far the ring is filled.
   */
  truncateAfter(tS: number): number {
    const cap = this.slots.length;
    let dropped = 0;
    while (this.filled > 0 && this.slots[this.newest]!.tS > tS) {
      this.newest = (this.newest - 1 + cap) % cap;
      this.filled--;
      dropped++;
    }
    if (this.filled === 0) this.newest = -1;
    return dropped;
  }
}
