/**
 * The study's hedge ratios (bump and revalue on common random numbers, DESIGN numerical choices) against the same
 * central bumps of the Black–Scholes formula, for the sample European on the demo snapshot under the deterministic-
 * rate Black–Scholes variant. The deal's strike (K = 4200, T = 1) sits on a grid node of the snapshot (moneyness 1,
 * expiry 1y), so the calibrated variant reprices it at the grid vol and a parallel vol bump moves that vol by exactly
 * the bump: every expected number below is a closed form (Black & Scholes 1973; Merton 1973).
 */
import { describe, it, expect } from 'vitest';
import { runStudy, DEFAULT_SETTINGS } from '../../src/engine/study/study.ts';
import type { SavedStudy } from '../../src/engine/study/types.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { bsPrice } from '../../src/engine/models/blackScholes.ts';
import { demoMarket, expectWithinSe, FULL, readJson } from './helpers.ts';

const market = demoMarket();
const deal = readJson<{ notional: number }>('samples/deals/european-call.json');

describe('study hedge ratios of the sample European under Black–Scholes match central bumps of the closed form', () => {
  let s: SavedStudy;
  async function run() {
    s ??= await runStudy({
      deal: deal as never,
      markets: [market],
      settings: {
        ...DEFAULT_SETTINGS,
        seed: 'crosscheck-greeks',
        paths: FULL ? 262_144 : 32_768,
        firstPaths: FULL ? 65_536 : 8192,
        batchSize: 4096,
        sweeps: null,
        localVol: false,
        calibrationStrikes: { ALDR: 4200 },
      },
    });
    return s;
  }

  const q = market.equities.ALDR!;
  const T = 1;
  const r = -Math.log(makeCurve(market.curves.DOM!).df(T)) / T;
  const gridVol = q.vols.vols[q.vols.expiries.indexOf(T)]![q.vols.moneyness!.indexOf(1)]!;
  const units = deal.notional / 4200; // the deal pays notional × max(S/4200 − 1, 0)
  const call = (o: { S?: number; r?: number; vol?: number }) =>
    units *
    bsPrice({
      type: 'call',
      S: o.S ?? q.spot,
      K: 4200,
      T,
      r: o.r ?? r,
      q: q.divYield,
      vol: o.vol ?? gridVol,
    });

  it('the Black–Scholes variant prices the deal at the closed form of the grid vol (K/S0 = 1, T = 1y node)', async () => {
    const st = await run();
    const i = st.ladder.findIndex((v) => v.id === 'bs');
    const p = st.results.prices[i]!;
    expectWithinSe({
      label: 'price',
      computed: p.value,
      se: p.se,
      expected: call({}),
      seCap: 0.001 * deal.notional,
    });
  });

  it('delta per 1 % spot move, rho per basis point and vega per vol point within 3 SE', async () => {
    const st = await run();
    const g = st.results.greeks?.find((x) => x.variant === 'bs');
    expect(g, 'greeks of the bs variant').toBeDefined();
    const h = st.input.settings.greeks!;
    // Central differences with the study's own bump sizes, scaled to its units (DESIGN: delta per 1 %, rho per bp,
    // vega per vol point).
    const delta =
      ((call({ S: q.spot * (1 + h.spotBump) }) - call({ S: q.spot * (1 - h.spotBump) })) * 0.01) /
      (2 * h.spotBump);
    const rho = ((call({ r: r + h.rateBump }) - call({ r: r - h.rateBump })) * 1e-4) / (2 * h.rateBump);
    const vega =
      ((call({ vol: gridVol + h.volBump }) - call({ vol: gridVol - h.volBump })) * 0.01) / (2 * h.volBump);
    expectWithinSe({
      label: 'delta',
      computed: g!.delta.value,
      se: g!.delta.se,
      expected: delta,
      seCap: 0.02 * Math.abs(delta),
    });
    expectWithinSe({
      label: 'rho',
      computed: g!.rho.value,
      se: g!.rho.se,
      expected: rho,
      seCap: 0.02 * Math.abs(rho),
    });
    expect(g!.vega, 'vega computed').not.toBeNull();
    expectWithinSe({
      label: 'vega',
      computed: g!.vega!.value,
      se: g!.vega!.se,
      expected: vega,
      seCap: 0.02 * Math.abs(vega),
    });
  });
});
