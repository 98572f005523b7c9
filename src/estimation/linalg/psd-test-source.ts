import { symmetricEntry } from './straight-line-source.js';

/**
 * Straight-line source for the positive semi-definiteness test of isPositiveSemidefinite
 * (cholesky.ts), with the same tolerance rules, on a symmetric n×n matrix held in locals
 * `${name}_i_j` (i ≤ j) that are already known to be finite.
 *
 * The test stays a full (tolerant) Cholesky factorization rather than a check of the diagonal:
 * the Joseph form is PSD in exact arithmetic only when the prior P and R are, and neither is
 * guaranteed here (R may come with the measurement, and P was accepted with a tolerance that is
 * relative to a larger, earlier scale); in floating point a near-singular P also leaves small
 * negative eigenvalues that no diagonal test sees. Unrolled, the factorization costs about as
 * much as one of the products it guards.
 *
 * The emitted statements execute `failure` when the matrix is refused.
 */
export function psdTestSource(name: string, n: number, failure: string, tol = 1e-10): string {
  const a = (i: number, j: number): string => symmetricEntry(name, i, j);
  const c = (i: number, j: number): string => `${name}c_${i}_${j}`;
  const lines: string[] = [];
  const scale = `${name}Scale`;
  const eps = `${name}Eps`;
  const bound = `${name}Bound`;
  lines.push(`let ${scale} = 0;`);
  for (let i = 0; i < n; i++) lines.push(`if (${a(i, i)} > ${scale}) ${scale} = ${a(i, i)};`);
  const upper: string[] = [];
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) upper.push(`${a(i, j)} !== 0`);
  // An all-zero diagonal is PSD only for the zero matrix.
  lines.push(`if (${scale} === 0) { if (${upper.join(' || ')}) ${failure} } else {`);
  lines.push(`const ${eps} = ${tol} * ${scale};`);
  lines.push(`const ${bound} = Math.sqrt(${eps} * ${scale});`);
  lines.push(`let ${name}T = 0;`);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      const terms = [a(j, i)];
      for (let k = 0; k < j; k++) terms.push(`- ${c(i, k)} * ${c(j, k)}`);
      lines.push(`${name}T = ${terms.join(' ')};`);
      if (i === j) {
        lines.push(`if (${name}T < -${eps}) ${failure}`);
        lines.push(`const ${c(i, i)} = ${name}T > ${eps} ? Math.sqrt(${name}T) : 0;`);
      } else {
        // A zero pivot forces the rest of its column to vanish for a PSD matrix.
        lines.push(`let ${c(i, j)} = 0;`);
        lines.push(`if (${c(j, j)} === 0) { if (Math.abs(${name}T) > ${bound}) ${failure} } else ${c(i, j)} = ${name}T / ${c(j, j)};`);
      }
    }
  }
  lines.push('}');
  return lines.join('\n');
}
