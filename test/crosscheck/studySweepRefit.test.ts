/**
 * Correlation sweeps refit the ladder at each point (DESIGN step 5 applied to the sweep): for the sample European
 * struck at its calibration quote (K = 4200, T = 1y, a grid node of the snapshot), the Black–Scholes variant refitted
 * under Hull–White reprices the quote in closed form at any equity–rate correlation (Rabinovitch 1989), so at every
 * point of the eq:ALDR|rate:DOM sweep the price is the market's Black price and the rate factor's Δ is zero.
 */
import { describe, it, expect } from 'vitest';
import { runStudy, DEFAULT_SETTINGS } from '../../src/engine/study/study.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { bsPrice } from '../../src/engine/models/blackScholes.ts';
import { demoMarket, expectWithinSe, FULL, readJson } from './helpers.ts';

const market = demoMarket();
const deal = readJson<{ notional: number }>('samples/deals/european-call.json');

describe('the eq:ALDR|rate:DOM sweep of the sample European', () => {
  it('prices the quote at the market price and gives Δ(domestic rate) = 0 within 3 SE at every correlation', async () => {
    const s = await runStudy({
      deal: deal as never,
      markets: [market],
      settings: {
        ...DEFAULT_SETTINGS,
        seed: 'crosscheck-sweep',
        paths: FULL ? 262_144 : 32_768,
        firstPaths: FULL ? 65_536 : 8192,
        batchSize: 4096,
        greeks: null,
        localVol: false,
        sweeps: { points: 5 },
        extraCandidates: ['domesticRate'],
        calibrationStrikes: { ALDR: 4200 },
      },
    });
    const sw = s.results.sweeps.find((x) => x.pair === 'eq:ALDR|rate:DOM');
    expect(sw, 'sweep of eq:ALDR|rate:DOM').toBeDefined();
    expect(sw!.points.map((p) => p.rho)).toEqual([-0.4, -0.2, 0, 0.2, 0.4].map((x) => expect.closeTo(x, 12)));
    const q = market.equities.ALDR!;
    const r = -Math.log(makeCurve(market.curves.DOM!).df(1));
    const vol = q.vols.vols[q.vols.expiries.indexOf(1)]![q.vols.moneyness!.indexOf(1)]!;
    const want =
      (deal.notional / 4200) * bsPrice({ type: 'call', S: q.spot, K: 4200, T: 1, r, q: q.divYield, vol });
    for (const p of sw!.points) {
      expectWithinSe({
        label: `price at ρ = ${p.rho}`,
        computed: p.price.value,
        se: p.price.se,
        expected: want,
        seCap: 0.002 * deal.notional,
      });
      const d = p.deltas.domesticRate!;
      expectWithinSe({
        label: `Δ(domestic rate) at ρ = ${p.rho}`,
        computed: d.value,
        se: d.se,
        expected: 0,
        seCap: 0.0001 * deal.notional,
      });
    }
  });
});
