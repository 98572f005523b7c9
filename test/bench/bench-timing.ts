/** Small timing helpers for the benchmarks (never used by unit tests). */

/** Runs fn(i) `iterations` times after a warm-up and returns the median ns per call over `rounds`. */
export function nsPerCall(fn: (i: number) => void, iterations: number, rounds = 7): number {
  for (let i = 0; i < Math.min(iterations, 20_000); i++) fn(i);
  const samples: number[] = [];
  for (let r = 0; r < rounds; r++) {
    const t0 = process.hrtime.bigint();
    for (let i = 0; i < iterations; i++) fn(i);
    const t1 = process.hrtime.bigint();
    samples.push(Number(t1 - t0) / iterations);
  }
  samples.sort((a, b) => a - b);
  return samples[Math.floor(samples.length / 2)]!;
}

/** Forces a full collection when the process runs with --expose-gc (the bench script does). */
export function collectGarbage(): void {
  const gc = (globalThis as { gc?: () => void }).gc;
  if (gc !== undefined) {
    gc();
    gc();
  }
}

/** True when the garbage collector can be driven, so memory figures are meaningful. */
export function canCollectGarbage(): boolean {
  return typeof (globalThis as { gc?: unknown }).gc === 'function';
}
