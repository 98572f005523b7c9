/**
 * Nonzero masks of small dense matrices: which entries a generated kernel reads.
 *
 * A kernel built for a mask is correct for every matrix whose nonzeros lie inside that mask
 * (an entry the mask covers may still be zero; it then just multiplies by zero). Callers check
 * that containment whenever the matrix is rewritten, and widen the mask when it fails, so the
 * mask of one workspace only grows and a kernel is rebuilt at most once per new nonzero.
 */

/** True when every nonzero (or NaN) entry of the first len entries of a lies inside mask. */
export function fitsMask(a: Float64Array, mask: Uint8Array, len: number): boolean {
  for (let i = 0; i < len; i++) if (a[i] !== 0 && mask[i] === 0) return false;
  return true;
}

/** Adds the nonzero entries of a to mask (mask |= a ≠ 0). */
export function widenMask(a: Float64Array, mask: Uint8Array, len: number): void {
  for (let i = 0; i < len; i++) if (a[i] !== 0) mask[i] = 1;
}

/** Sets mask to exactly the nonzero entries of a. */
export function resetMask(a: Float64Array, mask: Uint8Array, len: number): void {
  for (let i = 0; i < len; i++) mask[i] = a[i] !== 0 ? 1 : 0;
}

/** A compact text key of a mask for caching kernels (allocates: pattern changes only). */
export function maskKey(mask: Uint8Array, len: number): string {
  let key = '';
  for (let i = 0; i < len; i += 4) {
    let nibble = 0;
    for (let b = 0; b < 4 && i + b < len; b++) if (mask[i + b] !== 0) nibble |= 1 << b;
    key += nibble.toString(16);
  }
  return key;
}
