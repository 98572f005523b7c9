/**
 * A prom-client Counter whose increments land in plain cells (see label-cells.ts) and reach the
 * counter only when it is scraped, so counting a measurement costs a few Map lookups instead of
 * a label hash per increment.
 */
import { Counter, type Registry } from 'prom-client';
import { LabelCells } from './label-cells.js';

/** One label set's running total. */
export interface CountCell {
  readonly labels: Readonly<Record<string, string>>;
  value: number;
}

/** Options of {@link createCellCounter}. */
export interface CellCounterOptions {
  readonly name: string;
  readonly help: string;
  /** One to three label names. */
  readonly labelNames: readonly string[];
  readonly registry: Registry;
}

/** Registers the counter and returns its cells: `cells.cell(a, b).value += 1` counts. */
export function createCellCounter(options: CellCounterOptions): LabelCells<CountCell> {
  const cells = new LabelCells<CountCell>(options.labelNames, (labels) => ({ labels, value: 0 }));
  new Counter({
    name: options.name,
    help: options.help,
    labelNames: [...options.labelNames],
    registers: [options.registry],
    collect() {
      // A counter has no set(): start from zero and add each running total.
      this.reset();
      for (const c of cells.cells()) this.inc(c.labels, c.value);
    },
  });
  return cells;
}
