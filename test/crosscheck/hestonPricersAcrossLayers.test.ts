/**
 * The calibration layer prices Heston vanillas with its own characteristic function and COS slices
 * (calibration/cosPricer.ts, calibration/hestonCharFn.ts); the models layer has its own COS and the Lewis (2000)
 * integral. On the parameters the ladder fits to the demo grid (every quote, 0.25y to 10y) and on the published Lewis
 * reference case (published.md Sec. 1), the three must agree: the fit the study reports is only as good as the pricer
 * it was made with. Every number here is either a published value or a second method.
 */
import { describe, it } from 'vitest';
import { calibrateHeston, hestonModelPrices } from '../../src/engine/calibration/hestonCalibration.ts';
import { gridQuotes, type VolQuote } from '../../src/engine/calibration/volGrid.ts';
import { hestonLewis } from '../../src/engine/models/hestonLewis.ts';
import { hestonCos } from '../../src/engine/models/hestonCos.ts';
import { bsImpliedVol } from '../../src/engine/models/blackScholes.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import type { HestonParams } from '../../src/engine/simulation/types.ts';
import { demoMarket, expectClose } from './helpers.ts';

describe('Heston vanilla pricers of the calibration and models layers agree', () => {
  it('on the Lewis reference calls K = 80 … 120 (published.md Sec. 1, Lewis high-precision prices, from memory)', () => {
    // S = 100, T = 1, r = 1 %, q = 2 %, v0 = 0.04, κ = 4, θ = 0.25, σ = 1, ρ = −0.5.
    const p: HestonParams = { v0: 0.04, kappa: 4, theta: 0.25, sigma: 1, rho: -0.5 };
    const ref: [number, number][] = [
      [80, 26.774758743998854],
      [90, 20.93334900059671],
      [100, 16.070154917028834],
      [110, 12.132211516709844],
      [120, 9.024913483457835],
    ];
    const df = Math.exp(-0.01);
    const F = (100 * Math.exp(-0.02)) / df;
    // Quotes as a market would give them: the implied vols of the reference prices (the calibration pricer sizes its
    // truncation range from the quotes' vols).
    const quotes: VolQuote[] = ref.map(([K, price], i) => ({
      row: 0,
      col: i,
      expiry: 1,
      strike: K,
      vol: bsImpliedVol({ type: 'call', price, S: 100, K, T: 1, r: 0.01, q: 0.02 }),
      forward: F,
      df,
      isCall: true,
      price,
      vega: 0,
      field: `ref[${i}]`,
    }));
    const cal = hestonModelPrices(p, quotes);
    ref.forEach(([K, want], i) => {
      // The calibration pricer runs 192 COS terms for speed (its documented accuracy is about 1e-5 vol points).
      expectClose(`calibration COS, K = ${K}`, cal[i]!, want, 2e-5);
      expectClose(
        `models Lewis, K = ${K}`,
        hestonLewis({ S: 100, T: 1, r: 0.01, q: 0.02, params: p, type: 'call', K }),
        want,
        1e-8,
      );
    });
  });

  it('on the parameters fitted to the demo ALDR grid, at every quote (second method: the Lewis integral)', () => {
    const market = demoMarket();
    const eq = market.equities.ALDR!;
    const curve = makeCurve(market.curves.DOM!);
    const quotes = gridQuotes(eq, curve, 'market.equities.ALDR');
    const fit = calibrateHeston({ name: 'ALDR', equity: eq, curve, quotes });
    const cal = hestonModelPrices(fit.params, quotes);
    let worst = 0;
    quotes.forEach((q, i) => {
      const r = -Math.log(q.df) / q.expiry;
      const qq = r - Math.log(q.forward / eq.spot) / q.expiry;
      const type = q.isCall ? 'call' : 'put';
      const lewis = hestonLewis({ S: eq.spot, T: q.expiry, r, q: qq, params: fit.params, type, K: q.strike });
      const cos = hestonCos({ S: eq.spot, T: q.expiry, r, q: qq, params: fit.params, type, K: q.strike });
      // Tolerance in price: 1e-5 vol points × vega (the calibration pricer's stated accuracy), at least 1e-6 × spot.
      const tol = Math.max(1e-7 * q.vega, 1e-6 * eq.spot);
      expectClose(
        `calibration vs Lewis, ${type} K = ${q.strike} T = ${q.expiry}`,
        cal[i]!,
        lewis,
        tol,
        fit.params,
      );
      expectClose(
        `models COS vs Lewis, ${type} K = ${q.strike} T = ${q.expiry}`,
        cos,
        lewis,
        1e-6 * eq.spot,
        fit.params,
      );
      worst = Math.max(worst, Math.abs(cal[i]! - lewis) / q.vega);
    });
    expectClose('largest calibration-pricer error in vol terms', worst, 0, 1e-6);
  });
});
