/**
 * A one-line progress bar on stderr for long runs: drawn only when stderr is a terminal, and
 * redrawn at most ten times a second so a fast replay does not spend its time painting.
 */
import { wallClockOf, type ToolIo } from './tool-io.js';

const MIN_INTERVAL_MS = 100;
const WIDTH = 30;

/** See the module comment. */
export class ProgressBar {
  private lastMs = Number.NEGATIVE_INFINITY;
  private drawn = false;
  private readonly now: () => number;

  /** A bar labelled `label` (e.g. the command name). */
  constructor(private readonly io: ToolIo, private readonly label: string) {
    this.now = wallClockOf(io);
  }

  /**
   * Redraws with done/total and a short detail text, unless drawn less than 100 ms ago; with
   * total 0 (an open-ended run) only the label and detail are shown.
   */
  update(done: number, total: number, detail: string): void {
    if (!this.io.isTTY) return;
    const t = this.now();
    if (t - this.lastMs < MIN_INTERVAL_MS) return;
    this.lastMs = t;
    if (total > 0) {
      const share = Math.min(1, done / total);
      const full = Math.round(share * WIDTH);
      const bar = `${'#'.repeat(full)}${'-'.repeat(WIDTH - full)}`;
      this.io.stderr.write(`\r\x1b[K${this.label} [${bar}] ${(share * 100).toFixed(0).padStart(3)}%  ${detail}`);
    } else {
      this.io.stderr.write(`\r\x1b[K${this.label}  ${detail}`);
    }
    this.drawn = true;
  }

  /** Clears the bar's line (when one was drawn). */
  clear(): void {
    if (this.drawn) this.io.stderr.write('\r\x1b[K');
    this.drawn = false;
  }
}
