import { describe, it, expect } from 'vitest';
import {
  checkVolArbitrage,
  makeVolSurface,
  monotoneCubic,
  volGridIssues,
} from '../../../src/engine/market/volSurface.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import type { VolGridSpec } from '../../../src/engine/market/types.ts';

const spot = 100;
const fwd = (t: number): number => spot * Math.exp(0.02 * t);
// Invented skewed grid (shape only; the checks are identities, limits and no-arbitrage conditions).
const grid: VolGridSpec = {
  expiries: [0.5, 1, 2, 5],
  moneyness: [0.8, 0.9, 1, 1.1, 1.2],
  vols: [
    [0.28, 0.24, 0.21, 0.19, 0.18],
    [0.27, 0.235, 0.21, 0.195, 0.185],
    [0.26, 0.23, 0.212, 0.2, 0.192],
    [0.25, 0.228, 0.215, 0.205, 0.198],
  ],
};

function firstIssue(f: () => unknown): { code: string; field: string; message: string } {
  try {
    f();
  } catch (e) {
    if (e instanceof EngineError) return e.issues[0]!;
    throw e;
  }
  throw new Error('expected an EngineError');
}

describe('makeVolSurface', () => {
  it('reproduces every quote at its own expiry and strike', () => {
    const s = makeVolSurface(grid, spot, fwd, 'equities.ALDR.vols');
    grid.expiries.forEach((T, i) =>
      grid.moneyness!.forEach((m, j) => {
        expect(Math.abs(s.vol(T, m * spot) - grid.vols[i]![j]!)).toBeLessThan(1e-15);
      }),
    );
  });

  it('is linear in total variance along expiry at fixed forward moneyness', () => {
    const s = makeVolSurface(grid, spot, fwd);
    // At-the-money-forward of row 1 (T = 1) and row 2 (T = 2) are not quotes, so compare interpolated values.
    for (const k of [-0.15, 0, 0.1]) {
      const w = (T: number): number => s.totalVariance(T, fwd(T) * Math.exp(k));
      const mid = w(1.5);
      expect(Math.abs(mid - 0.5 * (w(1) + w(2)))).toBeLessThan(1e-14);
      expect(Math.abs(w(1.25) - (0.75 * w(1) + 0.25 * w(2)))).toBeLessThan(1e-14);
    }
  });

  it('holds vols flat outside the grid in strike and in expiry', () => {
    const s = makeVolSurface(grid, spot, fwd);
    // Far strikes: beyond both row ends in forward moneyness.
    expect(s.vol(1, 10)).toBe(s.vol(1, 40));
    expect(s.vol(1, 1000)).toBe(s.vol(1, 500));
    // Before the first expiry and after the last: the row's vol at the same forward moneyness.
    expect(Math.abs(s.vol(0.1, fwd(0.1)) - s.vol(0.5, fwd(0.5)))).toBeLessThan(1e-15);
    expect(Math.abs(s.vol(10, fwd(10)) - s.vol(5, fwd(5)))).toBeLessThan(1e-15);
  });

  it('gives a flat surface from a flat grid (limit)', () => {
    const flat: VolGridSpec = {
      expiries: [1, 3],
      strikes: [80, 100, 120],
      vols: [
        [0.2, 0.2, 0.2],
        [0.2, 0.2, 0.2],
      ],
    };
    const s = makeVolSurface(flat, spot, fwd);
    for (const T of [0.2, 1, 2, 7])
      for (const K of [50, 90, 100, 130, 200]) expect(Math.abs(s.vol(T, K) - 0.2)).toBeLessThan(1e-15);
  });

  it('is continuous in strike with a continuous slope (C¹ Hermite)', () => {
    const s = makeVolSurface(grid, spot, fwd);
    for (const m of [0.9, 1, 1.1]) {
      const K = m * spot;
      const h = 1e-6;
      const left = (s.vol(1, K) - s.vol(1, K - h)) / h;
      const right = (s.vol(1, K + h) - s.vol(1, K)) / h;
      expect(Math.abs(left - right)).toBeLessThan(1e-5);
    }
  });

  it('rejects a negative or NaN vol naming the cell, the rule and the value', () => {
    const bad = structuredClone(grid);
    bad.vols[2]![3] = -0.1;
    const i = firstIssue(() => makeVolSurface(bad, spot, fwd, 'equities.ALDR.vols'));
    expect(i.field).toBe('equities.ALDR.vols.vols[2][3]');
    expect(i.code).toBe('E_VOL_QUOTE');
    expect(i.message).toMatch(/must be a finite lognormal vol > 0.*got -0.1/);
    const nan = structuredClone(grid);
    nan.vols[0]![0] = NaN;
    expect(firstIssue(() => makeVolSurface(nan, spot, fwd, 'v')).message).toMatch(
      /v.vols\[0\]\[0\].*got NaN/,
    );
  });

  it('rejects T ≤ 0, unsorted strikes, ragged rows and both/neither strike axes', () => {
    expect(firstIssue(() => makeVolSurface({ ...grid, expiries: [0, 1, 2, 5] }, spot, fwd, 'g')).field).toBe(
      'g.expiries[0]',
    );
    expect(
      firstIssue(() => makeVolSurface({ ...grid, moneyness: [0.8, 0.9, 1.1, 1, 1.2] }, spot, fwd, 'g')).field,
    ).toBe('g.moneyness[3]');
    const ragged = structuredClone(grid);
    ragged.vols[1]!.pop();
    expect(firstIssue(() => makeVolSurface(ragged, spot, fwd, 'g')).field).toBe('g.vols[1]');
    expect(volGridIssues({ ...grid, strikes: [1, 2, 3, 4, 5] }, 'g')[0]!.message).toContain(
      'exactly one of strikes',
    );
    expect(() => makeVolSurface(grid, spot, fwd).vol(0, 100)).toThrowError(
      /T = 0, K = 100; both must be finite and > 0/,
    );
  });
});

describe('monotoneCubic', () => {
  it('reproduces linear data exactly and never overshoots monotone data (Fritsch & Carlson 1980)', () => {
    const x = [0, 1, 2.5, 4];
    const lin = monotoneCubic(
      x,
      x.map((v) => 3 - 2 * v),
    );
    for (let t = 0; t <= 4; t += 0.13) expect(Math.abs(lin(t) - (3 - 2 * t))).toBeLessThan(1e-14);
    const step = monotoneCubic([0, 1, 2, 3, 4], [0, 0, 1, 1, 1]);
    let prev = -Infinity;
    for (let t = 0; t <= 4; t += 0.01) {
      const v = step(t);
      expect(v).toBeGreaterThanOrEqual(prev - 1e-15);
      expect(v).toBeGreaterThanOrEqual(-1e-15);
      expect(v).toBeLessThanOrEqual(1 + 1e-15);
      prev = v;
    }
  });
});

describe('checkVolArbitrage', () => {
  it('finds no arbitrage in a clean skewed grid', () => {
    expect(checkVolArbitrage(makeVolSurface(grid, spot, fwd, 'equities.ALDR.vols'))).toEqual([]);
  });

  it('warns W_CALENDAR_ARBITRAGE naming the later quote when total variance falls with expiry', () => {
    // w(1) = 0.09, w(2) = 2·0.2² = 0.08 < 0.09 (Gatheral 2006, ch. 3: w must not decrease in T).
    const g: VolGridSpec = {
      expiries: [1, 2],
      moneyness: [0.9, 1, 1.1],
      vols: [
        [0.3, 0.3, 0.3],
        [0.2, 0.2, 0.2],
      ],
    };
    const w = checkVolArbitrage(makeVolSurface(g, spot, fwd, 'equities.BRIX.vols'));
    expect(w.length).toBe(3);
    expect(w.every((i) => i.code === 'W_CALENDAR_ARBITRAGE' && i.severity === 'warning')).toBe(true);
    expect(w[0]!.field).toBe('equities.BRIX.vols.vols[1][0]');
  });

  it('warns W_BUTTERFLY_ARBITRAGE naming the middle quote when calls are not convex in strike', () => {
    // A vol spike at K = 100 makes C(100) > (C(95) + C(105))/2: a butterfly with negative value (Merton 1973).
    const g: VolGridSpec = { expiries: [1], strikes: [95, 100, 105], vols: [[0.2, 0.45, 0.2]] };
    const w = checkVolArbitrage(makeVolSurface(g, spot, fwd, 'equities.KESO.vols'));
    expect(
      w.some((i) => i.code === 'W_BUTTERFLY_ARBITRAGE' && i.field === 'equities.KESO.vols.vols[0][1]'),
    ).toBe(true);
  });
});
