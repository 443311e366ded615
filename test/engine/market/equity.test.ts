import { describe, it, expect } from 'vitest';
import { dividendPv, equityForward } from '../../../src/engine/market/equity.ts';
import { flatCurve } from '../../../src/engine/market/curve.ts';
import { normCdf } from '../../../src/engine/math/normal.ts';

/** Black (1976) call on a forward, discounted (written here for the check; common practice). */
function blackCall(F: number, K: number, sd: number, df: number): number {
  const d1 = Math.log(F / K) / sd + 0.5 * sd;
  return df * (F * normCdf(d1) - K * normCdf(d1 - sd));
}

describe('equityForward', () => {
  // Hull, "Options, Futures, and Other Derivatives" (8th ed.), BSM chapter, European options on dividend-paying
  // stocks: S = 40, K = 40, T = 0.5, r = 9 %, σ = 30 %, dividends 0.50 at 2 and 5 months: price 3.67 (from memory);
  // QuantLib 1.29 AnalyticDividendEuropeanEngine 3.67123320905 (/work/shared/reference/published.md).
  it('gives the escrowed forward that prices Hull’s discrete-dividend call at 3.67123320905', () => {
    const curve = flatCurve('DOM', 0.09);
    const eq = {
      spot: 40,
      divYield: 0,
      dividends: [
        { t: 2 / 12, amount: 0.5 },
        { t: 5 / 12, amount: 0.5 },
      ],
    };
    const pv = dividendPv(eq, curve, 0.5);
    expect(Math.abs(pv - (0.5 * Math.exp(-0.09 / 6) + 0.5 * Math.exp((-0.09 * 5) / 12)))).toBeLessThan(1e-15);
    const F = equityForward(eq, curve, 0.5);
    const price = blackCall(F, 40, 0.3 * Math.sqrt(0.5), curve.df(0.5));
    expect(Math.abs(price - 3.67123320905)).toBeLessThan(1e-10);
  });

  it('gives S·e^{(r−q)t} without cash dividends (cost of carry, Hull ch. 5; common practice)', () => {
    const curve = flatCurve('DOM', 0.03);
    const eq = { spot: 4200, divYield: 0.018 };
    for (const t of [0, 0.5, 3, 10])
      expect(Math.abs(equityForward(eq, curve, t) / (4200 * Math.exp(0.012 * t)) - 1)).toBeLessThan(1e-15);
  });

  it('counts only dividends paid in (0, t]', () => {
    const curve = flatCurve('DOM', 0);
    const eq = {
      spot: 100,
      divYield: 0,
      dividends: [
        { t: -0.1, amount: 5 },
        { t: 1, amount: 2 },
        { t: 2, amount: 3 },
      ],
    };
    expect(dividendPv(eq, curve, 0.99)).toBe(0);
    expect(dividendPv(eq, curve, 1)).toBe(2);
    expect(equityForward(eq, curve, 2.5)).toBe(95);
  });

  it('rejects a non-positive spot and dividends worth more than the spot, naming the field', () => {
    const curve = flatCurve('DOM', 0.01);
    expect(() => equityForward({ spot: -1, divYield: 0 }, curve, 1, 'equities.ALDR')).toThrowError(
      /equities.ALDR.spot/,
    );
    expect(() =>
      equityForward(
        { spot: 10, divYield: 0, dividends: [{ t: 0.5, amount: 11 }] },
        curve,
        1,
        'equities.ALDR',
      ),
    ).toThrowError(/equities.ALDR.dividends must have a present value below the spot/);
  });
});
