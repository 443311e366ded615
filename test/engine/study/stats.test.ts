import { describe, it, expect } from 'vitest';
import { normCdf, normQuantile, combination, ColumnAccumulator } from '../../../src/engine/study/stats.ts';

describe('normal distribution', () => {
  // Abramowitz & Stegun (1964), Handbook of Mathematical Functions, Table 26.1 (Φ to 15 places at x = 1, 2, 3).
  it('Φ matches the A&S Table 26.1 values', () => {
    const cases: [number, number][] = [
      [0, 0.5],
      [1, 0.841344746068543],
      [2, 0.977249868051821],
      [3, 0.99865010196837],
    ];
    for (const [x, want] of cases) expect(Math.abs(normCdf(x) - want), `x=${x}`).toBeLessThan(1e-14);
    expect(Math.abs(normCdf(-1) - (1 - 0.841344746068543))).toBeLessThan(1e-14);
  });
  // A&S (1964) Table 26.5 / common practice: z_{0.975} = 1.959964, z_{0.995} = 2.575829, z_{0.999} = 3.090232.
  it('Φ⁻¹ matches the tabulated percentage points', () => {
    expect(normQuantile(0.975)).toBeCloseTo(1.959964, 6);
    expect(normQuantile(0.995)).toBeCloseTo(2.575829, 6);
    expect(normQuantile(0.999)).toBeCloseTo(3.090232, 6);
    expect(normQuantile(0.5)).toBe(0);
  });
  it('Φ⁻¹ inverts Φ across the range, tails included', () => {
    for (const p of [1e-12, 1e-6, 0.001, 0.2, 0.5, 0.7, 0.999, 1 - 1e-9]) {
      const x = normQuantile(p);
      expect(Math.abs(normCdf(x) - p) / Math.min(p, 1 - p), `p=${p}`).toBeLessThan(1e-9);
    }
  });
});

describe('paired column statistics', () => {
  // Hand-computed: columns x = [1,2,3,4], y = [2,2,5,7]; var(x) = 5/3, var(y) = 6.25, cov = 3.5 (divisor n − 1).
  it('accumulates means and covariances exactly on a small hand example, in any batching', () => {
    const acc = new ColumnAccumulator(2);
    acc.add([
      [1, 2],
      [2, 2],
    ]);
    acc.add([
      [3, 4],
      [5, 7],
    ]);
    const s = acc.stats();
    expect(s.n).toBe(4);
    expect(s.mean[0]).toBeCloseTo(2.5, 14);
    expect(s.mean[1]).toBeCloseTo(4, 14);
    expect(s.cov[0]![0]).toBeCloseTo(5 / 3, 13);
    expect(s.cov[1]![1]).toBeCloseTo(6, 13);
    expect(s.cov[0]![1]).toBeCloseTo(3, 13);
    // Var(y − x) = var y + var x − 2 cov = 6 + 5/3 − 6 = 5/3 → SE of the mean difference √(5/3 / 4).
    const d = combination(s, { 0: -1, 1: 1 });
    expect(d.value).toBeCloseTo(1.5, 14);
    expect(d.se).toBeCloseTo(Math.sqrt(5 / 3 / 4), 13);
  });
});
