/**
 * Seeded uniform streams built on seedrandom's xor4096 generator (R. P. Brent, "Some long-period random number
 * generators using shifts and xors", ANZIAM J. 48, 2007: xorgens 4096, period 2^4096 − 1), 32 bits per draw.
 */
import seedrandom from 'seedrandom';

/** A source of uniforms in (0, 1) that fills arrays in bulk. */
export interface UniformSource {
  /** Writes `count` uniforms, each strictly inside (0, 1), into `out[offset ..]`. */
  fill(out: Float64Array, offset: number, count: number): void;
}

const TWO_M32 = 2.3283064365386963e-10; // 2^-32

/**
 * A uniform stream seeded by a string (for a batch: {@link batchSeed}). Each draw is (k + 1/2) / 2^32 with k the
 * generator's unsigned 32-bit output, so 0 and 1 never occur and the inverse normal cdf stays finite.
 */
export function makeUniformStream(seed: string): UniformSource {
  const prng = seedrandom.xor4096(seed);
  return {
    fill(out, offset, count) {
      const end = offset + count;
      for (let i = offset; i < end; i++) out[i] = ((prng.int32() >>> 0) + 0.5) * TWO_M32;
    },
  };
}
