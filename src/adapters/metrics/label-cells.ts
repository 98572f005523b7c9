/**
 * One cell per label set, found by walking a small tree of Maps keyed by label value: no label
 * object, no hash string and no allocation once a cell exists. prom-client hashes the label
 * object on every `inc` or `observe` (about a microsecond each here, several per measurement);
 * the metrics adapter counts into cells instead and hands the totals over at scrape time.
 */

type Node<C> = Map<string, Node<C> | C>;

/** Cells by label values, for up to three label names. */
export class LabelCells<C> {
  private readonly root: Node<C> = new Map();
  private readonly all: C[] = [];

  /**
   * @param labelNames one to three names, in the order `cell` takes their values
   * @param make creates the cell of a new label set (called once per set)
   */
  constructor(
    private readonly labelNames: readonly string[],
    private readonly make: (labels: Readonly<Record<string, string>>) => C,
  ) {
    if (labelNames.length < 1 || labelNames.length > 3) throw new Error('LabelCells takes one to three label names');
  }

  /** The cell of these label values (one per label name; extra values are ignored). */
  cell(v0: string, v1 = '', v2 = ''): C {
    const depth = this.labelNames.length;
    let node = this.root;
    for (let i = 0; i < depth - 1; i++) {
      const key = i === 0 ? v0 : v1;
      let next = node.get(key) as Node<C> | undefined;
      if (next === undefined) {
        next = new Map();
        node.set(key, next);
      }
      node = next;
    }
    const last = depth === 1 ? v0 : depth === 2 ? v1 : v2;
    let leaf = node.get(last) as C | undefined;
    if (leaf === undefined) {
      const values = [v0, v1, v2];
      const labels: Record<string, string> = {};
      this.labelNames.forEach((name, i) => (labels[name] = values[i]!));
      leaf = this.make(Object.freeze(labels));
      node.set(last, leaf);
      this.all.push(leaf);
    }
    return leaf;
  }

  /** Every cell made so far, in order of creation. */
  cells(): readonly C[] {
    return this.all;
  }
}
