import { describe, expect, it } from 'vitest';
import {
  calibrateLadder,
  calibrateVariant,
  factorSubsets,
} from '../../../src/engine/calibration/ladderCalibration.ts';
import { chooseCalibrationSet } from '../../../src/engine/calibration/chooseCalibrationSet.ts';
import { calibrateFx } from '../../../src/engine/calibration/fxCalibration.ts';
import { makeCurve } from '../../../src/engine/market/index.ts';
import { bsHullWhite } from '../../../src/engine/models/index.ts';
import { gridVolAt } from '../../../src/engine/calibration/volGrid.ts';
import { FO_HESTON, HULL_HW, syntheticSnapshot } from './syntheticMarket.ts';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { analyseDeal, compileDeal } from '../../../src/engine/deal/index.ts';

const snap = syntheticSnapshot();

describe('calibration set', () => {
  it('takes the grid expiries bracketing each deal date and weighs strikes near the deal levels', () => {
    const set = chooseCalibrationSet(
      { dates: [1.5, 4], strikes: { EQD: [95] }, equities: ['EQD'], currencies: ['DOM'] },
      snap,
    );
    const rows = [...new Set(set.equities.EQD!.cells.map((c) => c.row))];
    // Grid expiries 0.25, 0.5, 1, 2, 3, 5: 1.5 lies in [1, 2], 4 in [3, 5].
    expect(rows.map((i) => snap.equities.EQD!.vols.expiries[i])).toEqual([1, 2, 3, 5]);
    const w = set.equities.EQD!.cells.filter((c) => c.row === rows[0]);
    // Strikes 70 … 130 by 10 at T = 1 (F ≈ 102.0): within [0.9·95, 1.1·F] = [85.5, 112.2] weigh 1, others 0.25.
    expect(w.map((c) => c.weight)).toEqual([0.25, 0.25, 1, 1, 1, 0.25, 0.25]);
    expect(set.equities.EQD!.bsTargets.every((t) => t.strike === 95)).toBe(true);
    expect(set.rates.DOM!.quoteIndices.map((i) => snap.rateVols!.DOM!.quotes[i]!.expiry)).toEqual([
      1, 2, 3, 5,
    ]);
    expect(set.weighting).toMatch(/weight 1/);
  });

  it('reads the dates, equities and currencies of a deal analysis (the deal layer’s)', () => {
    // Structural check on an invented sample deal (input only): a 5-year ALDR/DOM payoff with one final date.
    const deal = JSON.parse(
      readFileSync(path.resolve(__dirname, '../../../samples/deals/equity-rate-best-of.json'), 'utf8'),
    );
    const analysis = analyseDeal(compileDeal(deal));
    const market = {
      ...snap,
      equities: { ALDR: { ...snap.equities.EQD!, spot: 4200 } },
      rateVols: snap.rateVols,
    };
    const set = chooseCalibrationSet(analysis, market);
    const rows = [...new Set(set.equities.ALDR!.cells.map((c) => c.row))].map(
      (i) => market.equities.ALDR.vols.expiries[i],
    );
    // Last date ≈ 5.005y: the grid expiries bracketing it are 5 (below); none above, so the last one — and at least two.
    expect(rows).toContain(5);
    expect(rows.length).toBeGreaterThanOrEqual(2);
    expect(set.equities.ALDR!.cells.every((c) => c.weight === 1)).toBe(true);
    expect(Object.keys(set.rates)).toEqual(['DOM']);
  });

  it('applies a user override', () => {
    const set = chooseCalibrationSet({ dates: [2], equities: ['EQD'] }, snap, {
      rates: { DOM: { quoteIndices: [0, 5], reason: 'user' } },
    });
    expect(set.rates.DOM).toEqual({ quoteIndices: [0, 5], reason: 'user' });
  });
});

describe('ladder calibration', () => {
  const L = calibrateLadder(snap, {
    equities: ['EQD', 'EQF'],
    factors: { stochVol: true, domRate: true, forRate: true },
  });

  it('builds every subset of the candidate factors, base first', () => {
    expect(factorSubsets({ stochVol: true, domRate: true, forRate: false }).length).toBe(4);
    expect(L.variants.map((v) => v.id)).toEqual([
      'bs',
      'heston',
      'bs+hw:dom',
      'heston+hw:dom',
      'bs+hw:for',
      'heston+hw:for',
      'bs+hw:dom+hw:for',
      'heston+hw:dom+hw:for',
    ]);
  });

  it('labels the characteristic function of each variant: exact, or approximate for Heston under rates', () => {
    const cf = Object.fromEntries(L.variants.map((v) => [v.id, v.cost.characteristicFunction]));
    expect(cf).toMatchObject({
      bs: 'exact',
      heston: 'exact',
      'bs+hw:dom': 'exact',
      'heston+hw:dom': 'approximate',
      'heston+hw:dom+hw:for': 'approximate',
    });
    for (const v of L.variants) expect(v.cost.seconds).toBeGreaterThanOrEqual(0);
  });

  it('fits Hull–White per currency and recovers the generating parameters', () => {
    expect(Math.abs(L.hullWhite.DOM!.params.a - HULL_HW.a)).toBeLessThan(1e-5);
    expect(Math.abs((L.hullWhite.ASH!.params.sigma as number) - 0.007)).toBeLessThan(1e-7);
  });

  it('gives the deterministic-rate Heston variant the generating parameters back', () => {
    const h = L.variants.find((v) => v.id === 'heston')!.equities.find((e) => e.name === 'EQD')!.dynamics;
    expect(h.kind).toBe('heston');
    if (h.kind === 'heston') {
      expect(Math.abs(h.rho - FO_HESTON.rho)).toBeLessThan(5e-3);
      expect(Math.abs(h.v0 / FO_HESTON.v0 - 1)).toBeLessThan(2e-3);
    }
  });

  it('refits Black–Scholes under stochastic rates so each target vanilla still matches (closed-form check)', () => {
    const v = L.variants.find((x) => x.id === 'bs+hw:dom')!;
    const e = v.equities.find((x) => x.name === 'EQD')!;
    expect(e.dynamics.kind).toBe('bs');
    const curve = makeCurve(snap.curves.DOM!);
    const eq = snap.equities.EQD!;
    if (e.dynamics.kind === 'bs')
      for (const T of eq.vols.expiries) {
        const F = (100 * Math.exp(-0.01 * T)) / curve.df(T);
        const r = bsHullWhite({
          type: 'call',
          S: 100,
          K: F,
          T,
          q: 0.01,
          curve,
          vol: e.dynamics,
          hw: v.hullWhite.DOM!,
          rho: 0.2,
        });
        expect(Math.abs(r.effectiveVol - gridVolAt(eq, curve, T, F)), `T=${T}`).toBeLessThan(1e-10);
      }
    // The foreign equity keeps deterministic ASH rates in this variant.
    expect(v.reports.EQF!.model).toBe('bs');
  });

  it('calibrates one variant on its own to the same result', () => {
    const one = calibrateVariant(
      snap,
      { equities: ['EQD', 'EQF'], factors: { stochVol: true, domRate: true, forRate: true } },
      { stochVol: true, domRate: true, forRate: false },
    );
    const ladder = L.variants.find((v) => v.id === 'heston+hw:dom')!;
    expect(one.equities).toEqual(ladder.equities);
    expect(one.ok).toBe(ladder.ok);
  });

  it('carries the FX pair of the foreign equity with its quanto correlation', () => {
    expect(L.fx['ASH/DOM']!.spec.vol).toBe(0.1);
    expect(L.fx['ASH/DOM']!.quanto.EQF!.rho).toBe(-0.2);
  });

  it('builds the local-vol diagnostic on request and refuses a Monte Carlo refit without its settings', () => {
    const lv = calibrateLadder(snap, {
      equities: ['EQD'],
      factors: { stochVol: false, domRate: false, forRate: false },
      localVol: true,
    });
    expect(lv.localVol.EQD!.dynamics.kind).toBe('localvol');
    expect(lv.localVol.EQD!.flooredCells).toBe(0);
    expect(() =>
      calibrateLadder(snap, {
        equities: ['EQD'],
        factors: { stochVol: true, domRate: true, forRate: false },
        refit: 'monte-carlo',
      }),
    ).toThrow(/must give paths and seed/);
  });

  it('asks for rate vols when a currency with a stochastic rate has none', () => {
    const s2 = { ...snap, rateVols: { DOM: snap.rateVols!.DOM! } };
    expect(() =>
      calibrateLadder(s2, { equities: ['EQF'], factors: { stochVol: false, domRate: false, forRate: true } }),
    ).toThrow(/rateVols\.ASH must give caplet or swaption vols/);
  });

  it('reads FX from the quote and reports the quanto correlation with its plausible range', () => {
    const fx = calibrateFx(snap, 'ASH/DOM', ['EQF']);
    expect(fx.spec).toEqual({ name: 'ASH/DOM', foreign: 'ASH', spot: 2, vol: 0.1 });
    expect(fx.quanto.EQF).toEqual({ rho: -0.2, range: [-0.5, 0.3] });
  });
});
