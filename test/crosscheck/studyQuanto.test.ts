/**
 * A quanto call through the whole study (rules, ladder, runner, looks) on the demo snapshot: the base variant's price
 * against the quanto closed form on that variant's own parameters (Haug 1998, fixed exchange-rate foreign equity
 * options, pp. 105–106, with time-dependent σ_S: common practice), and the quanto drift never treated as a factor
 * (DESIGN step 3: it is part of every variant).
 */
import { describe, it, expect } from 'vitest';
import { runStudy, DEFAULT_SETTINGS } from '../../src/engine/study/study.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { blackUndiscounted } from '../../src/engine/models/blackScholes.ts';
import { demoMarket, expectWithinSe, FULL } from './helpers.ts';

const market = demoMarket();
const notional = 1_000_000;
const T = 2;
const deal = {
  format: 'factor-triage/deal@1',
  name: 'KESO two-year quanto call',
  valuationDate: '2026-11-23',
  notional,
  currency: 'DOM',
  underlyings: { KESO: { kind: 'equity', currency: 'ASH', initialLevel: 2350 } },
  schedules: { expiry: { dates: ['2028-11-22'] } },
  events: [
    {
      on: 'expiry',
      pay: { amount: 'max(perf(KESO) - 1, 0)', currency: 'ASH', conversion: { kind: 'quanto', rate: 1.37 } },
    },
  ],
};

describe('a quanto call through the study on the demo snapshot', () => {
  it('the base variant prices it at the quanto closed form of its own parameters within 3 SE', async () => {
    const s = await runStudy({
      deal: deal as never,
      markets: [market],
      settings: {
        ...DEFAULT_SETTINGS,
        seed: 'crosscheck-study-quanto',
        paths: FULL ? 262_144 : 32_768,
        firstPaths: FULL ? 65_536 : 8192,
        batchSize: 4096,
        greeks: null,
        sweeps: null,
        localVol: false,
      },
    });
    const v = s.ladder[0]!;
    expect(v.factors, 'base variant has no stochastic factor').toEqual([]);
    const spec = v.spec;
    const eq = spec.equities.find((e) => e.name === 'KESO')!;
    if (eq.dynamics.kind !== 'bs') throw new Error('expected Black–Scholes dynamics');
    const d = eq.dynamics;
    let intVar = 0;
    let intVol = 0;
    let lo = 0;
    for (let i = 0; i < d.vols.length && lo < T; i++) {
      const hi = i === d.vols.length - 1 ? T : Math.min(d.volTimes[i]!, T);
      if (hi > lo) {
        intVar += d.vols[i]! ** 2 * (hi - lo);
        intVol += d.vols[i]! * (hi - lo);
      }
      lo = Math.max(lo, hi);
    }
    const fx = spec.fx[0]!;
    const n = spec.correlation.names;
    const rho = spec.correlation.matrix[n.indexOf('eq:KESO')]![n.indexOf(`fx:${fx.name}`)]!;
    const Pd = makeCurve(market.curves.DOM!).df(T);
    const Pf = makeCurve(market.curves.ASH!).df(T);
    const FQ = ((eq.spot * Math.exp(-eq.divYield * T)) / Pf) * Math.exp(-rho * fx.vol * intVol);
    const want = ((notional * 1.37) / 2350) * Pd * blackUndiscounted('call', FQ, 2350, Math.sqrt(intVar));
    const p = s.results.prices[0]!;
    expectWithinSe({
      label: 'study price of the quanto call (base variant)',
      computed: p.value,
      se: p.se,
      expected: want,
      seCap: 0.002 * notional,
      inputs: { rho, fx, d },
    });
    expect(s.verdicts.map((x) => x.factor)).not.toContain('quanto');
  });
});
