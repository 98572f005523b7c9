/**
 * Seeded pseudo-random streams for the demo simulator.
 *
 * Generator: xoshiro128** (D. Blackman, S. Vigna, "Scrambled Linear Pseudorandom Number
 * Generators", ACM Trans. Math. Softw. 47(4), 2021). All state arithmetic is 32-bit integer
 * (`Math.imul`, `>>> 0`), so the integer stream is bit-identical on every platform.
 * Derived floats use only `Math.sqrt` (correctly rounded by IEEE 754) and `Math.log`, which V8
 * implements with its own fdlibm port rather than the platform libm, so Node reproduces them too.
 *
 * Streams are keyed, not chained: `fork(label)` derives a child from the parent's 128-bit key and
 * the label alone, never from how many numbers the parent has drawn. Adding an entity or a fault
 * therefore never shifts the noise of another entity or sensor.
 */

const TWO_POW_32 = 4294967296;
const TWO_POW_53 = 9007199254740992;
const TWO_POW_26 = 67108864;

/** MurmurHash3's 32-bit finaliser (A. Appleby, 2011): a bijection with full avalanche. */
function fmix32(value: number): number {
  let h = value | 0;
  h = Math.imul(h ^ (h >>> 16), 0x85ebca6b);
  h = Math.imul(h ^ (h >>> 13), 0xc2b2ae35);
  return (h ^ (h >>> 16)) >>> 0;
}

/** FNV-1a over UTF-16 code units, started from a key word instead of the FNV offset basis. */
function hashLabel(keyWord: number, label: string): number {
  let h = (keyWord ^ 0x811c9dc5) >>> 0;
  for (let i = 0; i < label.length; i += 1) {
    h = Math.imul(h ^ label.charCodeAt(i), 0x01000193);
  }
  return fmix32(h ^ label.length);
}

function deriveKey(parent: readonly number[], label: string): number[] {
  const key = [0, 0, 0, 0];
  for (let i = 0; i < 4; i += 1) key[i] = hashLabel(fmix32((parent[i] ?? 0) + Math.imul(i + 1, 0x9e3779b9)), label);
  return key;
}

const ROOT_KEY: readonly number[] = [0x243f6a88, 0x85a308d3, 0x13198a2e, 0x03707344];

/** One independent random stream; create with `createPrng`, derive siblings with `fork`. */
export class Prng {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare = 0;
  private hasSpare = false;
  private readonly key: readonly number[];

  /** Starts xoshiro128** from an explicit 4-word state (not all zero); `key` seeds `fork`. */
  constructor(state: readonly [number, number, number, number], key: readonly number[] = state) {
    this.s0 = state[0] >>> 0;
    this.s1 = state[1] >>> 0;
    this.s2 = state[2] >>> 0;
    this.s3 = state[3] >>> 0;
    if ((this.s0 | this.s1 | this.s2 | this.s3) === 0) {
      throw new RangeError('xoshiro128** state must not be all zero');
    }
    this.key = key;
  }

  /** Next raw 32-bit output as an unsigned integer in [0, 2^32). */
  nextUint32(): number {
    const s1 = this.s1;
    const result = Math.imul(rotl(Math.imul(s1, 5), 7), 9) >>> 0;
    const t = s1 << 9;
    this.s2 ^= this.s0;
    this.s3 ^= s1;
    this.s1 = s1 ^ this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3, 11);
    return result;
  }

  /** Uniform float in [0, 1) with 53 random bits (two raw outputs). */
  nextFloat(): number {
    const high = this.nextUint32() >>> 5;
    const low = this.nextUint32() >>> 6;
    return (high * TWO_POW_26 + low) / TWO_POW_53;
  }

  /** Uniform float in [minV, maxV). */
  nextUniform(minV: number, maxV: number): number {
    return minV + (maxV - minV) * this.nextFloat();
  }

  /** Unbiased uniform integer in [0, n) for an integer 1 ≤ n ≤ 2^32 (rejection of the short tail). */
  nextInt(n: number): number {
    if (!Number.isInteger(n) || n < 1 || n > TWO_POW_32) {
      throw new RangeError(`nextInt needs an integer 1..2^32, got ${n}`);
    }
    const limit = TWO_POW_32 - (TWO_POW_32 % n);
    let x = this.nextUint32();
    while (x >= limit) x = this.nextUint32();
    return x % n;
  }

  /**
   * Standard normal deviate by the polar method (G. Marsaglia, T. A. Bray, "A Convenient Method
   * for Generating Normal Variables", SIAM Review 6(3), 1964), which yields two deviates per
   * accepted pair: the second is cached and returned by the next call.
   */
  nextGaussian(): number {
    if (this.hasSpare) {
      this.hasSpare = false;
      return this.spare;
    }
    let u: number;
    let v: number;
    let s: number;
    do {
      // 32-bit resolution is ample here and costs one raw output per coordinate.
      u = (this.nextUint32() + 0.5) / 2147483648 - 1;
      v = (this.nextUint32() + 0.5) / 2147483648 - 1;
      s = u * u + v * v;
    } while (s >= 1);
    const m = Math.sqrt((-2 * Math.log(s)) / s);
    this.spare = v * m;
    this.hasSpare = true;
    return u * m;
  }

  /** Independent child stream named `label`; depends only on this stream's key and the label. */
  fork(label: string): Prng {
    const key = deriveKey(this.key, label);
    return new Prng(stateFromKey(key), key);
  }
}

function rotl(x: number, k: number): number {
  return (x << k) | (x >>> (32 - k));
}

function stateFromKey(key: readonly number[]): [number, number, number, number] {
  // A second, different mixing of the key, so the state is not the key that forks derive from.
  const state: [number, number, number, number] = [0, 0, 0, 0];
  for (let i = 0; i < 4; i += 1) state[i] = fmix32((key[i] ?? 0) + Math.imul(i + 5, 0x9e3779b9));
  if ((state[0] | state[1] | state[2] | state[3]) === 0) state[0] = 1;
  return state;
}

/**
 * Root stream for a run. A number seed is used through its decimal string, so `42` and `'42'`
 * give the same stream; any string (a scenario name, a run label) is a valid seed.
 */
export function createPrng(seed: number | string): Prng {
  if (typeof seed === 'number' && !Number.isFinite(seed)) {
    throw new RangeError(`seed must be finite, got ${seed}`);
  }
  const key = deriveKey(ROOT_KEY, String(seed));
  return new Prng(stateFromKey(key), key);
}
