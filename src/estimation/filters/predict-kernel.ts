import { compiledKernel } from '../linalg/kernel-cache.js';
import { maskKey } from '../linalg/nonzero-mask.js';
import { anyNonFinite, entry, sumOf, symmetricEntry } from '../linalg/straight-line-source.js';

/**
 * A generated time update for one nonzero mask of A: reads A, Q (upper triangle), x and P
 * (upper triangle; P must be symmetric), and when every result is finite writes A x into xOut
 * and A P Aᵀ + Q, exactly symmetric, into POut and returns true. xOut and POut may be x and P:
 * every input is read before anything is written. Returns false and writes nothing otherwise.
 */
export type PredictKernel = (
  A: Float64Array, Q: Float64Array, x: Float64Array, P: Float64Array, xOut: Float64Array, POut: Float64Array,
) => boolean;

/** Beyond this many product terms the source grows past what V8 optimizes well: use loops. */
const MAX_TERMS = 2500;

/**
 * The kernel for an n-state transition with nonzeros where mask (n×n, row-major) is set, or
 * null when the product has too many terms for straight-line code. Setup and pattern changes
 * only (allocates, may compile).
 */
export function predictKernelFor(n: number, mask: Uint8Array): PredictKernel | null {
  const rows = rowsOf(n, mask);
  if (predictTerms(n, rows) > MAX_TERMS) return null;
  return compiledKernel<PredictKernel>(`predict:${n}:${maskKey(mask, n * n)}`, ['A', 'Q', 'x', 'P', 'xOut', 'POut'], () => predictSource(n, rows));
}

/** Column indices of the nonzeros of each row. */
function rowsOf(n: number, mask: Uint8Array): number[][] {
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) {
    const cols: number[] = [];
    for (let j = 0; j < n; j++) if (mask[i * n + j] !== 0) cols.push(j);
    rows.push(cols);
  }
  return rows;
}

function predictTerms(n: number, rows: number[][]): number {
  let nnz = 0;
  for (const r of rows) nnz += r.length;
  // A·P costs nnz terms per column, the upper triangle of (A P)·Aᵀ about half of that again.
  return nnz * n + (nnz * (n + 1)) / 2;
}

/**
 * x' = A x; T = A P on the columns later read; P' = T Aᵀ + Q on the upper triangle. Terms are
 * summed in the order of the loop kernels (sparse-pattern.ts), so both give the same bits.
 */
function predictSource(n: number, rows: number[][]): string {
  const out: string[] = [];
  const a = (i: number, j: number): string => entry('a', i, j);
  const p = (i: number, j: number): string => symmetricEntry('p', i, j);
  const t = (i: number, k: number): string => entry('t', i, k);
  const q = (i: number, j: number): string => entry('q', i, j);
  for (let i = 0; i < n; i++) for (const j of rows[i]!) out.push(`const ${a(i, j)} = A[${i * n + j}];`);
  for (let i = 0; i < n; i++) out.push(`const x_${i} = x[${i}];`);
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) out.push(`const ${p(i, j)} = P[${i * n + j}];`);
  const results: string[] = [];
  for (let i = 0; i < n; i++) {
    out.push(`const y_${i} = ${sumOf(rows[i]!.map((j) => `${a(i, j)} * x_${j}`))};`);
    results.push(`y_${i}`);
  }
  // Row by row, so that only one row of T is alive at a time (fewer register spills); only the
  // columns k that some row j ≥ i of A reads are needed from row i of T.
  for (let i = 0; i < n; i++) {
    const needed = new Set<number>();
    for (let j = i; j < n; j++) for (const k of rows[j]!) needed.add(k);
    for (const k of [...needed].sort((u, v) => u - v)) {
      out.push(`const ${t(i, k)} = ${sumOf(rows[i]!.map((j) => `${a(i, j)} * ${p(j, k)}`))};`);
    }
    for (let j = i; j < n; j++) {
      out.push(`const ${q(i, j)} = (${sumOf(rows[j]!.map((k) => `${t(i, k)} * ${a(j, k)}`))}) + Q[${i * n + j}];`);
      results.push(q(i, j));
    }
  }
  out.push(`if (${anyNonFinite(results)}) return false;`);
  for (let i = 0; i < n; i++) out.push(`xOut[${i}] = y_${i};`);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      out.push(`POut[${i * n + j}] = ${q(i, j)};`);
      if (j !== i) out.push(`POut[${j * n + i}] = ${q(i, j)};`);
    }
  }
  out.push('return true;');
  return out.join('\n');
}
