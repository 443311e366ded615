/**
 * The whole study path (deal language with ISO dates, rules, ladder calibration on the demo snapshot, common random
 * numbers, looks, leave-one-out Δ, Shapley) on a deal whose value does not depend on the model: an equity forward
 * and a zero-coupon bond. Every variant must price it at S0 e^{−qT1}/S_init − P(0,T1) + P(0,T2) per unit notional
 * (absence of arbitrage; common practice), so every factor's true Δ is zero.
 */
import { describe, it, expect } from 'vitest';
import { runStudy, DEFAULT_SETTINGS } from '../../src/engine/study/study.ts';
import type { SavedStudy } from '../../src/engine/study/types.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { demoMarket, expectClose, expectWithinSe, FULL } from './helpers.ts';

const market = demoMarket();
const notional = 1_000_000;
const deal = {
  format: 'factor-triage/deal@1',
  name: 'forward and zero bond',
  valuationDate: '2026-11-23',
  notional,
  currency: 'DOM',
  underlyings: { ALDR: { kind: 'equity', currency: 'DOM', initialLevel: 4200 } },
  schedules: { fwd: { dates: ['2028-11-22'] }, zc: { dates: ['2029-11-22'] } },
  events: [
    { label: 'forward', on: 'fwd', pay: { amount: 'perf(ALDR) - 1' } },
    { label: 'zero bond', on: 'zc', pay: { amount: '1' } },
  ],
};

/** ACT/365F year fraction between ISO dates, computed here from calendar days (common practice). */
const yf = (a: string, b: string) =>
  (Date.parse(`${b}T00:00:00Z`) - Date.parse(`${a}T00:00:00Z`)) / 86_400_000 / 365;

describe('a model-free deal through the whole study on the demo snapshot', () => {
  let study: SavedStudy;
  async function run() {
    study ??= await runStudy({
      deal: deal as never,
      markets: [market],
      settings: {
        ...DEFAULT_SETTINGS,
        seed: 'crosscheck-model-free',
        paths: FULL ? 262_144 : 32_768,
        firstPaths: FULL ? 65_536 : 8192,
        batchSize: 4096,
        greeks: null,
        sweeps: null,
        localVol: false,
        extraCandidates: ['stochVol', 'domesticRate'],
      },
    });
    return study;
  }

  it('every ladder variant prices forward + bond at its arbitrage-free value within 3 SE', async () => {
    const s = await run();
    const T1 = yf('2026-11-23', '2028-11-22');
    const T2 = yf('2026-11-23', '2029-11-22');
    expectClose('T1 (730 days)', T1, 2, 1e-12);
    const curve = makeCurve(market.curves.DOM!);
    const q = market.equities.ALDR!;
    const want = notional * ((q.spot * Math.exp(-q.divYield * T1)) / 4200 - curve.df(T1) + curve.df(T2));
    expect(s.ladder.map((v) => v.id)).toEqual(['bs', 'heston', 'bs+hw(DOM)', 'heston+hw(DOM)']);
    s.results.prices.forEach((p, i) =>
      expectWithinSe({
        label: `price under ${s.ladder[i]!.id}`,
        computed: p.value,
        se: p.se,
        expected: want,
        seCap: 0.002 * notional,
      }),
    );
  });

  it('each factor’s final leave-one-out Δ is the difference of the variant prices and is zero within 3 SE', async () => {
    const s = await run();
    const last = s.results.convergence[s.results.convergence.length - 1]!;
    const full = s.ladder.length - 1;
    s.candidates.forEach((f, bit) => {
      const loo = full & ~(1 << bit);
      const d = last.deltas[f]!;
      expectClose(
        `Δ(${f}) = price(richest) − price(richest without ${f})`,
        d.value,
        s.results.prices[full]!.value - s.results.prices[loo]!.value,
        1e-9 * notional,
      );
      expectWithinSe({
        label: `Δ(${f}) of a model-free deal`,
        computed: d.value,
        se: d.se,
        expected: 0,
        seCap: 0.001 * notional,
      });
      // Paired paths: the Δ's SE is far below the SE of either price (common random numbers, DESIGN step 6).
      expect(d.se).toBeLessThan(s.results.prices[full]!.se);
    });
  });

  it('the Shapley values add up to the richest price minus the base price (efficiency, Shapley 1953)', async () => {
    const s = await run();
    const sum = s.results.shapley.reduce((t, x) => t + x.value, 0);
    const full = s.ladder.length - 1;
    expectClose('Σ φ', sum, s.results.prices[full]!.value - s.results.prices[0]!.value, 1e-9 * notional);
  });
});
