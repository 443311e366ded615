import { describe, it, expect } from 'vitest';
import { fxForward } from '../../../src/engine/market/fx.ts';
import { flatCurve, makeCurve } from '../../../src/engine/market/curve.ts';
import { normCdf } from '../../../src/engine/math/normal.ts';

describe('fxForward', () => {
  // Haug (1998), The Complete Guide to Option Pricing Formulas, pp. 2-8, Garman–Kohlhagen example: S = 1.56,
  // K = 1.60, T = 0.5, r_d = 6 %, r_f = 8 %, σ = 12 %: call 0.0291 (from memory; QuantLib 1.29 gives 0.0290992531494,
  // /work/shared/reference/published.md). The call is Black (1976) on the parity forward, discounted domestically.
  it('gives the parity forward that prices Haug’s Garman–Kohlhagen call at 0.0290992531494', () => {
    const curves = { DOM: flatCurve('DOM', 0.06), ASH: flatCurve('ASH', 0.08) };
    const F = fxForward({ foreign: 'ASH', domestic: 'DOM', spot: 1.56 }, curves, 0.5);
    expect(Math.abs(F - 1.56 * Math.exp(-0.01))).toBeLessThan(1e-15);
    const sd = 0.12 * Math.sqrt(0.5);
    const d1 = Math.log(F / 1.6) / sd + 0.5 * sd;
    const call = curves.DOM.df(0.5) * (F * normCdf(d1) - 1.6 * normCdf(d1 - sd));
    expect(Math.abs(call - 0.0290992531494)).toBeLessThan(1e-12);
  });

  it('equals spot at t = 0 and when both curves coincide (limit)', () => {
    const c = makeCurve({ currency: 'DOM', times: [1, 5], zeroRates: [0.02, 0.03] });
    const curves = { DOM: c, ASH: { ...c, currency: 'ASH' } };
    expect(fxForward({ foreign: 'ASH', domestic: 'DOM', spot: 1.37 }, curves, 0)).toBe(1.37);
    expect(fxForward({ foreign: 'ASH', domestic: 'DOM', spot: 1.37 }, curves, 4)).toBe(1.37);
  });

  it('names a missing curve or a bad spot', () => {
    const curves = { DOM: flatCurve('DOM', 0.01) };
    expect(() =>
      fxForward({ foreign: 'ASH', domestic: 'DOM', spot: 1.37 }, curves, 1, 'fx.ASH/DOM'),
    ).toThrowError(/fx.ASH\/DOM.foreign must name a currency with a curve/);
    expect(() => fxForward({ foreign: 'DOM', domestic: 'DOM', spot: 0 }, curves, 1, 'fx.X')).toThrowError(
      /fx.X.spot/,
    );
  });
});
