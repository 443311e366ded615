import { describe, it, expect } from 'vitest';
import { inverseNormal } from '../../../src/engine/random/inverseNormal.ts';
import { makeNormalSource } from '../../../src/engine/random/normalStream.ts';
import { makeUniformStream } from '../../../src/engine/random/uniformStream.ts';
import { normInv } from '../../../src/engine/math/normal.ts';

describe('normal draws by the inverse cdf', () => {
  it('the fast AS 241 quantile agrees with the refined quantile of the math layer', () => {
    // Second method in the project: math/normal.ts normInv (AS 241 plus one Halley step).
    for (const p of [1e-12, 1e-6, 0.001, 0.025, 0.3, 0.5, 0.7, 0.975, 0.999, 1 - 1e-9]) {
      const a = inverseNormal(p);
      const b = normInv(p);
      expect(Math.abs(a - b), `p=${p}: fast ${a}, refined ${b}`).toBeLessThanOrEqual(
        1e-14 * Math.max(1, Math.abs(b)),
      );
    }
    // Φ⁻¹(0.975) = 1.959963984540054 (standard normal tables, e.g. Abramowitz & Stegun 1964 Table 26.5; from memory).
    expect(inverseNormal(0.975)).toBeCloseTo(1.959963984540054, 14);
  });

  it('uniforms stay strictly inside (0, 1) and reproduce for the same seed', () => {
    const a = new Float64Array(100_000);
    const b = new Float64Array(100_000);
    makeUniformStream('s').fill(a, 0, a.length);
    makeUniformStream('s').fill(b, 0, b.length);
    expect(a).toEqual(b);
    let lo = 1;
    let hi = 0;
    for (const u of a) {
      lo = Math.min(lo, u);
      hi = Math.max(hi, u);
    }
    expect(lo).toBeGreaterThan(0);
    expect(hi).toBeLessThan(1);
  });

  it('normals have mean 0, variance 1 and kurtosis 3 within their sampling error', () => {
    const n = 200_000;
    const z = new Float64Array(n);
    makeNormalSource(makeUniformStream('moments')).fill(z, 0, n);
    let m1 = 0,
      m2 = 0,
      m4 = 0;
    for (const x of z) {
      m1 += x;
      m2 += x * x;
      m4 += x ** 4;
    }
    m1 /= n;
    m2 /= n;
    m4 /= n;
    // Sampling SDs: mean 1/√n, variance √(2/n), 4th moment √(96/n) (moments of N(0,1); common practice).
    expect(Math.abs(m1)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(m2 - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
    expect(Math.abs(m4 - 3)).toBeLessThan(4 * Math.sqrt(96 / n));
  });

  it('antithetic filling mirrors the first half', () => {
    const z = new Float64Array(10);
    makeNormalSource(makeUniformStream('anti'), { antithetic: true }).fill(z, 0, 10);
    for (let i = 0; i < 5; i++) expect(z[i + 5]).toBe(-z[i]!);
  });
});
