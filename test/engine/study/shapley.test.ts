import { describe, it, expect } from 'vitest';
import { shapley, shapleyWeights } from '../../../src/engine/study/shapley.ts';
import type { ColumnStats } from '../../../src/engine/study/stats.ts';

const exact = (mean: number[]): ColumnStats => ({
  n: 1,
  mean,
  cov: mean.map(() => mean.map(() => 0)),
});

describe('Shapley attribution', () => {
  // Shapley (1953): efficiency — the values add up to v(N) − v(∅).
  it('adds up to the richest minus the base', () => {
    const prices = [10, 12, 9, 15, 11, 14, 13, 20];
    const res = shapley({ factors: ['a', 'b', 'c'], stats: exact(prices), column: (m) => m });
    expect(res.reduce((s, r) => s + r.value, 0)).toBeCloseTo(20 - 10, 12);
  });
  // Shapley (1953): additive game — with no interaction each factor gets its own stand-alone effect.
  it('gives each factor its own effect when effects are additive', () => {
    const eff = [1.5, -2, 0.25];
    const prices = Array.from(
      { length: 8 },
      (_, m) => 100 + eff.reduce((s, e, f) => s + (m & (1 << f) ? e : 0), 0),
    );
    const res = shapley({ factors: ['a', 'b', 'c'], stats: exact(prices), column: (m) => m });
    res.forEach((r, f) => expect(r.value).toBeCloseTo(eff[f]!, 12));
  });
  // Two players with a pure interaction v({a,b}) = 1, v({a}) = v({b}) = 0: symmetry gives 1/2 each (Shapley 1953).
  it('splits a pure interaction equally (symmetry)', () => {
    const res = shapley({ factors: ['a', 'b'], stats: exact([0, 0, 0, 1]), column: (m) => m });
    expect(res.map((r) => r.value)).toEqual([0.5, 0.5]);
  });
  it('weights sum to zero (a constant shift of every variant does not move any φ)', () => {
    for (let f = 0; f < 3; f++) expect(shapleyWeights(3, f).reduce((s, x) => s + x, 0)).toBeCloseTo(0, 14);
  });
  // Variance of a linear combination wᵀΣw/n (common practice): with independent unit-variance columns, SE² = Σw²/n.
  it('takes its standard error from the full covariance', () => {
    const cov = [
      [1, 0, 0, 0],
      [0, 1, 0, 0],
      [0, 0, 1, 0],
      [0, 0, 0, 1],
    ];
    const res = shapley({ factors: ['a', 'b'], stats: { n: 4, mean: [0, 0, 0, 0], cov }, column: (m) => m });
    // φ_a = ½(v(a) − v(∅)) + ½(v(ab) − v(b)): weights (−½, ½, −½, ½) → Σw² = 1 → SE = √(1/4).
    expect(res[0]!.se).toBeCloseTo(0.5, 14);
    // Perfectly correlated columns with equal variance: the combination has zero variance.
    const ones = [0, 1, 2, 3].map(() => [1, 1, 1, 1]);
    const res2 = shapley({
      factors: ['a', 'b'],
      stats: { n: 4, mean: [0, 0, 0, 0], cov: ones },
      column: (m) => m,
    });
    expect(res2[0]!.se).toBeCloseTo(0, 14);
  });
});
