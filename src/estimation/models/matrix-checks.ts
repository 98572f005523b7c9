/**
 * Validators for matrices given in a model's configuration. Each returns a fresh row-major
 * Float64Array the model may keep, or throws a ModelConfigError that names the matrix and says
 * what was expected and what was found. Construction time only (they allocate).
 */
import { ModelConfigError } from '../model-config-error.js';
import { asymmetry, minEigenvalue, symmetrizeInPlace } from '../linalg/symmetric.js';

/** A matrix as configuration supplies it: nested rows, or flat row-major entries. */
export type MatrixInput = ArrayLike<number> | readonly (readonly number[])[];

/** Largest relative asymmetry max|aᵢⱼ − aⱼᵢ| / max|aᵢⱼ| accepted as rounding. */
export const SYMMETRY_TOLERANCE = 1e-9;

/** Eigenvalues down to −PSD_TOLERANCE · max|aᵢⱼ| are accepted as rounding of a zero eigenvalue. */
export const PSD_TOLERANCE = 1e-12;

function isNested(data: MatrixInput): data is readonly (readonly number[])[] {
  return Array.isArray(data) && data.length > 0 && Array.isArray(data[0]);
}

function flattenNested(name: string, data: readonly (readonly number[])[], rows: number, cols: number): Float64Array {
  const ragged = data.findIndex((row) => !Array.isArray(row) || row.length !== data[0]!.length);
  if (ragged >= 0) {
    throw new ModelConfigError(
      name,
      `${name} must be ${rows}×${cols}, got a ragged array (row ${ragged} has ${String(data[ragged]?.length)} entries, row 0 has ${data[0]!.length})`,
    );
  }
  if (data.length !== rows || data[0]!.length !== cols) {
    throw new ModelConfigError(name, `${name} must be ${rows}×${cols}, got ${data.length}×${data[0]!.length}`);
  }
  const out = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) out[i * cols + j] = data[i]![j]!;
  return out;
}

function flattenFlat(name: string, data: ArrayLike<number>, rows: number, cols: number): Float64Array {
  if (data.length !== rows * cols) {
    throw new ModelConfigError(
      name,
      `${name} must be ${rows}×${cols} (${rows * cols} entries, row-major), got ${data.length} entries`,
    );
  }
  return Float64Array.from(data);
}

/** Size n of a square matrix input: the row count of nested rows, or √length (rounded) when flat. */
export function inferSquareSize(data: MatrixInput): number {
  return isNested(data) ? data.length : Math.round(Math.sqrt(data.length));
}

/** Column count of a matrix input with `rows` rows: nested row width, or ⌊length/rows⌋ (≥ 1) when flat. */
export function inferColumns(data: MatrixInput, rows: number): number {
  return isNested(data) ? data[0]!.length : Math.max(1, Math.floor(data.length / Math.max(1, rows)));
}

/**
 * Checks that `data` is a rows×cols matrix of finite numbers and returns it flat, row-major.
 * Throws ModelConfigError, e.g. `A must be 3×3, got 3×2` or `A[1][2] must be finite, got NaN`.
 */
export function checkShape(name: string, data: MatrixInput, rows: number, cols: number): Float64Array {
  const nested = isNested(data);
  const out = nested ? flattenNested(name, data, rows, cols) : flattenFlat(name, data as ArrayLike<number>, rows, cols);
  for (let k = 0; k < out.length; k++) {
    if (!Number.isFinite(out[k]!)) {
      const raw = nested ? (data as readonly (readonly number[])[])[Math.floor(k / cols)]![k % cols] : (data as ArrayLike<number>)[k];
      throw new ModelConfigError(
        name,
        `${name}[${Math.floor(k / cols)}][${k % cols}] must be a finite number, got ${String(raw)}`,
      );
    }
  }
  return out;
}

function worstAsymmetricPair(a: Float64Array, n: number): [number, number] {
  let best: [number, number] = [0, 1];
  let worst = -1;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const d = Math.abs(a[i * n + j]! - a[j * n + i]!);
      if (d > worst) {
        worst = d;
        best = [i, j];
      }
    }
  }
  return best;
}

/**
 * Checks that `data` is an n×n covariance: finite, symmetric within SYMMETRY_TOLERANCE
 * (relative) and positive semi-definite within −PSD_TOLERANCE·max|entry|. Returns it flat and
 * exactly symmetrized. Throws ModelConfigError, e.g. `Q is not positive semi-definite: eigenvalue -0.02 ...`.
 */
export function checkCovariance(name: string, data: MatrixInput, n: number): Float64Array {
  const out = checkShape(name, data, n, n);
  const rel = asymmetry(out, n);
  if (rel > SYMMETRY_TOLERANCE) {
    const [i, j] = worstAsymmetricPair(out, n);
    throw new ModelConfigError(
      name,
      `${name} is not symmetric: ${name}[${i}][${j}] = ${out[i * n + j]} but ${name}[${j}][${i}] = ${out[j * n + i]} ` +
        `(relative asymmetry ${rel.toPrecision(3)}, allowed ${SYMMETRY_TOLERANCE})`,
    );
  }
  symmetrizeInPlace(out, n);
  let scale = 0;
  for (let k = 0; k < out.length; k++) scale = Math.max(scale, Math.abs(out[k]!));
  const lowest = minEigenvalue(out, n);
  const allowed = -PSD_TOLERANCE * scale;
  if (lowest < allowed) {
    throw new ModelConfigError(
      name,
      `${name} is not positive semi-definite: eigenvalue ${Number(lowest.toPrecision(6))} (expected ≥ ${Number(allowed.toPrecision(3))})`,
    );
  }
  return out;
}
