/**
 * Helpers for writing straight-line kernel source: every matrix entry becomes a local named
 * after its matrix and position, so the generated code has no index arithmetic at all.
 */

/** The local holding entry (i, j) of the matrix named `name`, e.g. `p_1_3`. */
export function entry(name: string, i: number, j: number): string {
  return `${name}_${i}_${j}`;
}

/** The local of entry (i, j) of a symmetric matrix whose upper triangle alone is held. */
export function symmetricEntry(name: string, i: number, j: number): string {
  return i <= j ? entry(name, i, j) : entry(name, j, i);
}

/** A sum of product terms as source; `0` when there are none. */
export function sumOf(terms: readonly string[]): string {
  return terms.length === 0 ? '0' : terms.join(' + ');
}

/**
 * A test that is true when any of the locals is NaN or ±∞: v·0 is 0 for a finite v and NaN
 * otherwise, and a sum of zeros cannot overflow, so one comparison covers all of them.
 */
export function anyNonFinite(locals: readonly string[]): string {
  return locals.length === 0 ? 'false' : `(${locals.map((v) => `${v} * 0`).join(' + ')}) !== 0`;
}
