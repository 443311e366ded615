/**
 * Standard normal draws by the inverse cdf of uniforms (so a quasi-random uniform source can replace the
 * pseudo-random one without changing anything downstream).
 */
import { normInvFastInPlace } from '../math/normal.ts';
import type { UniformSource } from './uniformStream.ts';

/** A source of independent standard normals that fills arrays in bulk. */
export interface NormalSource {
  /** Writes `count` normals into `out[offset ..]`. */
  fill(out: Float64Array, offset: number, count: number): void;
}

/**
 * Normals Φ⁻¹(U) from a uniform source. With `antithetic`, each call fills the first ⌈count/2⌉ entries from fresh
 * uniforms and the rest with their negatives in the same order (entry i + ⌈count/2⌉ = −entry i), so path p and path
 * p + ⌈n/2⌉ form an antithetic pair.
 */
export function makeNormalSource(
  uniforms: UniformSource,
  options: { antithetic?: boolean } = {},
): NormalSource {
  const anti = options.antithetic === true;
  return {
    fill(out, offset, count) {
      const fresh = anti ? Math.ceil(count / 2) : count;
      uniforms.fill(out, offset, fresh);
      // Φ⁻¹ in bulk, the same values as inverseNormal entry by entry (inverseNormal.ts).
      normInvFastInPlace(out, offset, offset + fresh);
      if (anti) for (let i = fresh; i < count; i++) out[offset + i] = -out[offset + i - fresh]!;
    },
  };
}
