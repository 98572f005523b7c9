/**
 * The partition of an entity, computed the way the NATS server's `partition(P, wildcards…)`
 * subject-mapping function does: the 32-bit FNV-1a hash of the selected wildcard tokens'
 * bytes, concatenated in the order listed, modulo P. The scale-out contract test publishes
 * through a real server and checks that every message lands where this function says.
 */

const FNV_OFFSET_BASIS_32 = 0x811c9dc5;
const FNV_PRIME_32 = 0x01000193;
const encoder = new TextEncoder();

/** FNV-1a, 32 bits (Fowler–Noll–Vo; offset basis 2166136261, prime 16777619), as an unsigned integer. */
export function fnv1a32(bytes: Uint8Array, seed: number = FNV_OFFSET_BASIS_32): number {
  let h = seed >>> 0;
  for (let i = 0; i < bytes.length; i++) {
    h ^= bytes[i]!;
    h = Math.imul(h, FNV_PRIME_32) >>> 0;
  }
  return h >>> 0;
}

/**
 * The partition in [0, partitions) of the given subject tokens (the entity's wildcard values,
 * e.g. `['tug-01']`). Hashing token by token equals hashing their concatenation, so no joined
 * string is built.
 */
export function partitionOfTokens(tokens: readonly string[], partitions: number): number {
  let h = FNV_OFFSET_BASIS_32;
  for (const token of tokens) h = fnv1a32(encoder.encode(token), h);
  return h % partitions;
}

/** The partition of an engine entity key (its captured topic levels joined with '/'). */
export function partitionOfEntity(entity: string, partitions: number): number {
  return partitionOfTokens(entity.split('/'), partitions);
}
