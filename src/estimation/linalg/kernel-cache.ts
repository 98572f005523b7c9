/**
 * A small bounded cache of kernels compiled from generated straight-line source.
 *
 * V8 runs loops over index arrays with trip counts of one or two poorly; the same products
 * written out as plain arithmetic on locals, with the sparsity and symmetry resolved while the
 * source is generated, run several times faster. The source depends only on a structure key
 * (dimensions and nonzero masks), so every workspace with the same structure shares one
 * compiled function. The bound keeps a stream of ever-new patterns from growing memory: the
 * oldest entry is dropped first.
 */

const MAX_ENTRIES = 64;
const compiled = new Map<string, unknown>();

/** Set once a compile was refused: the host forbids code from strings, so stop trying. */
let codeGenerationRefused = false;

/**
 * The function for `key`, compiled on first use from `params` and the body `build()` returns
 * (strict mode is added here), or null when the host forbids code generation from strings
 * (`--disallow-code-generation-from-strings`, a locked-down embedder): callers then use their
 * loop kernels, slower but the same arithmetic. Compiling happens only when a structure is first
 * seen.
 */
export function compiledKernel<F>(key: string, params: readonly string[], build: () => string): F | null {
  const hit = compiled.get(key);
  if (hit !== undefined) return hit as F;
  if (codeGenerationRefused) return null;
  let fn: F;
  try {
    fn = new Function(...params, `'use strict';\n${build()}`) as F;
  } catch (error) {
    // Only the host's refusal (an EvalError) means "use loops"; a bad source is our bug.
    if (!(error instanceof EvalError)) throw error;
    codeGenerationRefused = true;
    return null;
  }
  if (compiled.size >= MAX_ENTRIES) {
    const oldest = compiled.keys().next();
    if (oldest.done !== true) compiled.delete(oldest.value);
  }
  compiled.set(key, fn);
  return fn;
}

/** Number of kernels held (for tests of the bound). */
export function compiledKernelCount(): number {
  return compiled.size;
}
