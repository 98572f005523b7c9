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

/**
 * Median ns per call of two functions measured in alternating rounds, so a change of machine
 * load during the run hits both alike and their ratio stays meaningful.
 */
export function pairedNsPerCall(
  a: (i: number) => void, iterationsA: number, b: (i: number) => void, iterationsB: number, rounds = 9,
): [number, number] {
  for (let i = 0; i < Math.min(iterationsA, 20_000); i++) a(i);
  for (let i = 0; i < Math.min(iterationsB, 20_000); i++) b(i);
  const sa: number[] = [];
  const sb: number[] = [];
  for (let r = 0; r < rounds; r++) {
    let t0 = process.hrtime.bigint();
    for (let i = 0; i < iterationsA; i++) a(i);
    sa.push(Number(process.hrtime.bigint() - t0) / iterationsA);
    t0 = process.hrtime.bigint();
    for (let i = 0; i < iterationsB; i++) b(i);
    sb.push(Number(process.hrtime.bigint() - t0) / iterationsB);
  }
  const median = (s: number[]) => s.sort((x, y) => x - y)[Math.floor(s.length / 2)]!;
  return [median(sa), median(sb)];
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
