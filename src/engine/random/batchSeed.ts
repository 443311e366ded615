/**
 * Derivation of one independent stream seed per batch from a run seed, so any batch can be recomputed alone.
 *
 * Mixing function: SplitMix64 (G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number
 * generators", OOPSLA 2014; the finaliser is the "mix64" variant 13 of D. Stafford's constants). The batch seed is
 *   z = mix64(mix64(s) + (b + 1) · γ),   γ = 0x9E3779B97F4A7C15 (the golden-ratio increment),
 * where s is the 64-bit run seed (an integer, or the FNV-1a 64-bit hash of a string seed), b the batch index, and
 * arithmetic is modulo 2^64. z is rendered as a 16-digit hex string, which seeds the batch's generator. Adjacent
 * batches therefore get unrelated seeds (unlike `seed + b`).
 */

const MASK = (1n << 64n) - 1n;
const GAMMA = 0x9e3779b97f4a7c15n;

/** SplitMix64 output function (mix64 / Stafford variant 13) on a 64-bit unsigned value. */
export function splitMix64(x: bigint): bigint {
  let z = x & MASK;
  z = ((z ^ (z >> 30n)) * 0xbf58476d1ce4e5b9n) & MASK;
  z = ((z ^ (z >> 27n)) * 0x94d049bb133111ebn) & MASK;
  return z ^ (z >> 31n);
}

/** FNV-1a 64-bit hash of the UTF-16 code units of a string (Fowler, Noll, Vo; offset basis and prime as published). */
export function fnv1a64(text: string): bigint {
  let h = 0xcbf29ce484222325n;
  for (let i = 0; i < text.length; i++) {
    h ^= BigInt(text.charCodeAt(i));
    h = (h * 0x100000001b3n) & MASK;
  }
  return h;
}

/** The 64-bit value of a run seed: a non-negative safe integer as is, a string by FNV-1a. */
export function seedValue(runSeed: string | number): bigint {
  if (typeof runSeed === 'number') {
    if (!Number.isSafeInteger(runSeed) || runSeed < 0)
      throw new RangeError(`seed must be a non-negative safe integer or a string (got ${runSeed})`);
    return BigInt(runSeed);
  }
  return fnv1a64(runSeed);
}

/**
 * Seed string of batch `batchIndex` (0, 1, ...) of a run seeded with `runSeed`.
 * Pure: the same inputs always give the same string.
 */
export function batchSeed(runSeed: string | number, batchIndex: number): string {
  if (!Number.isSafeInteger(batchIndex) || batchIndex < 0)
    throw new RangeError(`batch index must be a non-negative integer (got ${batchIndex})`);
  const s = splitMix64(seedValue(runSeed));
  const z = splitMix64((s + BigInt(batchIndex + 1) * GAMMA) & MASK);
  return z.toString(16).padStart(16, '0');
}
