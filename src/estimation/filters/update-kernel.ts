import { compiledKernel } from '../linalg/kernel-cache.js';
import { maskKey } from '../linalg/nonzero-mask.js';
import { psdTestSource } from '../linalg/psd-test-source.js';
import { anyNonFinite, entry, sumOf, symmetricEntry } from '../linalg/straight-line-source.js';

/** What a generated update returns: applied, refused by the gate, or refused by the numbers. */
export const UPDATE_APPLIED = 0;
export const UPDATE_GATE = 1;
export const UPDATE_NUMERICS = 2;

/**
 * A generated measurement update for one (n, m, nonzero mask of H). It reads x, P (upper
 * triangle; P must be symmetric), H, R and the innovation nu; writes S = H P Hᵀ + R (full) and
 * its diagonal, S's Cholesky factor L (m×m, upper part zeroed) and the NIS into nisOut[0] once S
 * is factorized, and the gain K (n×m) once the gate
 * passes; and commits x + Kν and the Joseph-form P into x and P only when both are finite and
 * P is PSD. Returns UPDATE_APPLIED, UPDATE_GATE or UPDATE_NUMERICS.
 */
export type UpdateKernel = (
  x: Float64Array, P: Float64Array, H: Float64Array, R: Float64Array, nu: Float64Array, gate: number,
  S: Float64Array, sDiagonal: Float64Array, L: Float64Array, K: Float64Array, nisOut: Float64Array,
) => number;

/** Beyond this many product terms the source grows past what V8 optimizes well: use loops. */
const MAX_TERMS = 2500;

/**
 * The kernel for n states, m components and H's nonzeros where mask (m×n) is set, or null when
 * it would be too large for straight-line code. Setup and pattern changes only.
 */
export function updateKernelFor(n: number, m: number, mask: Uint8Array): UpdateKernel | null {
  const rows: number[][] = [];
  let nnz = 0;
  for (let r = 0; r < m; r++) {
    const cols: number[] = [];
    for (let k = 0; k < n; k++) if (mask[r * n + k] !== 0) cols.push(k);
    rows.push(cols);
    nnz += cols.length;
  }
  // U and W cost n·nnz, the Joseph products about 2 n² m, the PSD test n³/6.
  if (2 * n * nnz + 2 * n * n * m + (n * n * n) / 6 > MAX_TERMS) return null;
  return compiledKernel<UpdateKernel>(
    `update:${n}:${m}:${maskKey(mask, m * n)}`,
    ['x', 'P', 'H', 'R', 'nu', 'gate', 'S', 'sDiagonal', 'L', 'K', 'nisOut'],
    () => updateSource(n, m, rows),
  );
}

/**
 * The update in the order of kalmanUpdateInPlace's loop path: U = P Hᵀ, S = H U + R, Cholesky
 * S = L Lᵀ (no inverse; each pivot's reciprocal is formed once), d² = |L⁻¹ν|², the gate, the
 * gain rows by two triangular solves, and the Joseph form in factored order (see josephInto).
 */
function updateSource(n: number, m: number, rows: number[][]): string {
  const out: string[] = [];
  const h = (r: number, k: number): string => entry('h', r, k);
  const p = (i: number, j: number): string => symmetricEntry('p', i, j);
  const u = (i: number, r: number): string => entry('u', i, r);
  const s = (r: number, c: number): string => symmetricEntry('s', r, c);
  const rs = (r: number, c: number): string => symmetricEntry('rs', r, c);
  const l = (i: number, j: number): string => entry('l', i, j);
  const k = (i: number, r: number): string => entry('k', i, r);
  const lp = (i: number, j: number): string => entry('lp', i, j);
  const w = (i: number, r: number): string => entry('w', i, r);
  const d = (i: number, c: number): string => entry('d', i, c);
  for (let r = 0; r < m; r++) for (const c of rows[r]!) out.push(`const ${h(r, c)} = H[${r * n + c}];`);
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) out.push(`const ${p(i, j)} = P[${i * n + j}];`);
  for (let r = 0; r < m; r++) out.push(`const nu_${r} = nu[${r}];`);
  // Averaging R's two triangles keeps a slightly asymmetric reported covariance from skewing S.
  for (let r = 0; r < m; r++) {
    out.push(`const ${rs(r, r)} = R[${r * m + r}];`);
    for (let c = r + 1; c < m; c++) out.push(`const ${rs(r, c)} = 0.5 * (R[${r * m + c}] + R[${c * m + r}]);`);
  }
  for (let i = 0; i < n; i++) {
    for (let r = 0; r < m; r++) out.push(`const ${u(i, r)} = ${sumOf(rows[r]!.map((c) => `${p(i, c)} * ${h(r, c)}`))};`);
  }
  const checked: string[] = [];
  for (let r = 0; r < m; r++) {
    for (let c = r; c < m; c++) {
      out.push(`const ${s(r, c)} = (${sumOf(rows[r]!.map((j) => `${h(r, j)} * ${u(j, c)}`))}) + ${rs(r, c)};`);
      out.push(`S[${r * m + c}] = ${s(r, c)};`);
      if (c !== r) out.push(`S[${c * m + r}] = ${s(r, c)};`);
      checked.push(s(r, c));
    }
    out.push(`sDiagonal[${r}] = ${s(r, r)};`);
    checked.push(`nu_${r}`);
  }
  out.push(`if (${anyNonFinite(checked)}) return 2;`);
  // `!(t > 0)` also refuses NaN.
  for (let i = 0; i < m; i++) {
    for (let j = 0; j <= i; j++) {
      const terms = [s(j, i)];
      for (let q = 0; q < j; q++) terms.push(`- ${l(i, q)} * ${l(j, q)}`);
      if (i === j) {
        out.push(`const g_${i} = ${terms.join(' ')};`);
        out.push(`if (!(g_${i} > 0)) return 2;`);
        out.push(`const ld_${i} = Math.sqrt(g_${i});`);
        out.push(`const inv_${i} = 1 / ld_${i};`);
      } else {
        out.push(`const ${l(i, j)} = (${terms.join(' ')}) * inv_${j};`);
      }
    }
  }
  // The factor itself is part of the result: tools read log det S from its diagonal.
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) out.push(`L[${i * m + j}] = ${j < i ? l(i, j) : j === i ? `ld_${i}` : '0'};`);
  }
  for (let i = 0; i < m; i++) {
    const terms = [`nu_${i}`];
    for (let q = 0; q < i; q++) terms.push(`- ${l(i, q)} * z_${q}`);
    out.push(`const z_${i} = (${terms.join(' ')}) * inv_${i};`);
  }
  out.push(`const d2 = ${sumOf(Array.from({ length: m }, (_, i) => `z_${i} * z_${i}`))};`);
  out.push('nisOut[0] = d2;');
  out.push('if (d2 - d2 !== 0) return 2;');
  out.push('if (d2 > gate) return 1;');
  // Row i of K solves S kᵢ = uᵢ: forward with L, then back with Lᵀ.
  for (let i = 0; i < n; i++) {
    for (let r = 0; r < m; r++) {
      const terms = [u(i, r)];
      for (let q = 0; q < r; q++) terms.push(`- ${l(r, q)} * f_${i}_${q}`);
      out.push(`const f_${i}_${r} = (${terms.join(' ')}) * inv_${r};`);
    }
    for (let r = m - 1; r >= 0; r--) {
      const terms = [`f_${i}_${r}`];
      for (let q = r + 1; q < m; q++) terms.push(`- ${l(q, r)} * ${k(i, q)}`);
      out.push(`const ${k(i, r)} = (${terms.join(' ')}) * inv_${r};`);
      out.push(`K[${i * m + r}] = ${k(i, r)};`);
    }
  }
  const results: string[] = [];
  for (let i = 0; i < n; i++) {
    out.push(`const y_${i} = x[${i}] + ${sumOf(Array.from({ length: m }, (_, r) => `${k(i, r)} * nu_${r}`))};`);
    results.push(`y_${i}`);
  }
  josephSource(n, m, rows, { p, u, k, lp, w, d, h, rs }, out);
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) results.push(symmetricEntry('o', i, j));
  out.push(`if (${anyNonFinite(results)}) return 2;`);
  out.push(psdTestSource('o', n, 'return 2;'));
  for (let i = 0; i < n; i++) out.push(`x[${i}] = y_${i};`);
  for (let i = 0; i < n; i++) {
    for (let j = i; j < n; j++) {
      out.push(`P[${i * n + j}] = ${entry('o', i, j)};`);
      if (j !== i) out.push(`P[${j * n + i}] = ${entry('o', i, j)};`);
    }
  }
  out.push('return 0;');
  return out.join('\n');
}

type Names = Record<'p' | 'u' | 'k' | 'lp' | 'w' | 'd' | 'h' | 'rs', (i: number, j: number) => string>;

/**
 * The full Joseph form (I − KH) P (I − KH)ᵀ + K R Kᵀ into locals o_i_j (upper triangle):
 * LP = (I − KH) P = P − K Uᵀ (U = P Hᵀ, P symmetric), W = LP Hᵀ, D = K R − W, and
 * P⁺ = LP (I − KH)ᵀ + K R Kᵀ = LP + D Kᵀ. Only the entries of LP that P⁺ or W read are formed,
 * and row by row, so that few intermediate values are alive at once (fewer register spills).
 */
function josephSource(n: number, m: number, rows: number[][], x: Names, out: string[]): void {
  const hCols = new Set<number>();
  for (const r of rows) for (const c of r) hCols.add(c);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      if (j < i && !hCols.has(j)) continue;
      const terms = [x.p(i, j)];
      for (let r = 0; r < m; r++) terms.push(`- ${x.k(i, r)} * ${x.u(j, r)}`);
      out.push(`const ${x.lp(i, j)} = ${terms.join(' ')};`);
    }
    for (let r = 0; r < m; r++) out.push(`const ${x.w(i, r)} = ${sumOf(rows[r]!.map((c) => `${x.lp(i, c)} * ${x.h(r, c)}`))};`);
    for (let c = 0; c < m; c++) {
      out.push(`const ${x.d(i, c)} = ${sumOf(Array.from({ length: m }, (_, r) => `${x.k(i, r)} * ${x.rs(r, c)}`))} - ${x.w(i, c)};`);
    }
    for (let j = i; j < n; j++) {
      out.push(`const ${entry('o', i, j)} = ${x.lp(i, j)} + ${sumOf(Array.from({ length: m }, (_, c) => `${x.d(i, c)} * ${x.k(j, c)}`))};`);
    }
  }
}
