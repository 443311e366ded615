import { describe, expect, it } from 'vitest';
import {
  calibrateLadder,
  fitHullWhite,
  snapshotLadderBasis,
  studyLadderRequest,
  type LadderRequest,
} from '../../../src/engine/study/ladderCalibration.ts';
import { DEFAULT_SETTINGS } from '../../../src/engine/study/defaults.ts';
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

// The ladder of the calibrate command and of the study is one assembly (src/engine/study/ladderCalibration.ts);
// these checks run it on a snapshot alone, the basis the calibrate command uses without a deal.
describe('ladder calibration of a snapshot alone', () => {
  const basis = snapshotLadderBasis(snap, { equities: ['EQD', 'EQF'] });
  const req: LadderRequest = {
    snapshot: snap,
    analysis: basis,
    candidates: ['stochVol', 'domesticRate', 'foreignRate'],
    required: [],
    mode: 'fair',
    scheme: 'qe',
  };
  const L = calibrateLadder(req);
  const variant = (id: string) => L.variants.find((v) => v.id === id)!;

  it('takes every equity, its currency and every quote of the snapshot as the basis', () => {
    expect(basis.currency).toBe('DOM');
    expect(basis.currencies).toEqual(['DOM', 'ASH']);
    expect(basis.equities.map((e) => `${e.marketName}:${e.currency}`)).toEqual(['EQD:DOM', 'EQF:ASH']);
    // Last caplet fixes at 10y and pays at 11y (1y tenor); the last equity expiry is 5y.
    const ends = snap.rateVols!.DOM!.quotes.map((q) => q.expiry + q.tenor);
    expect(basis.lastTime).toBe(Math.max(...ends));
    expect(() => snapshotLadderBasis(snap, { equities: ['NOPE'] })).toThrow(
      /calibration\.equities must name equities of the market.*correct the name/,
    );
  });

  it('builds every subset of the candidate factors, base first', () => {
    expect(L.variants.map((v) => v.id)).toEqual([
      'bs',
      'heston',
      'bs+hw(DOM)',
      'heston+hw(DOM)',
      'bs+hw(ASH)',
      'heston+hw(ASH)',
      'bs+hw(DOM)+hw(ASH)',
      'heston+hw(DOM)+hw(ASH)',
    ]);
    expect(L.variants.map((v) => v.mask)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
  });

  it('labels the characteristic function of each variant: exact, or approximate for Heston under rates', () => {
    const cf = Object.fromEntries(L.variants.map((v) => [v.id, v.calibration.characteristicFunction]));
    expect(cf).toMatchObject({
      bs: 'exact',
      heston: 'exact',
      'bs+hw(DOM)': 'exact',
      'heston+hw(DOM)': 'approximate',
      'heston+hw(DOM)+hw(ASH)': 'approximate',
    });
    for (const v of L.variants) expect(v.calibration.seconds).toBeGreaterThanOrEqual(0);
    expect(L.reports.variants['heston+hw(DOM)']!.equities).toMatchObject({
      EQD: { model: 'h1-hw' },
      EQF: { model: 'heston' },
    });
  });

  // Hull, Options, Futures and Other Derivatives, short-rate chapter problem (a = 0.08, σ = 0.01; published.md,
  // from memory): caplet vols generated from these parameters give them back.
  it('fits Hull–White per currency and recovers the generating parameters', () => {
    expect(Math.abs(L.hullWhite.DOM!.params.a - HULL_HW.a)).toBeLessThan(1e-5);
    expect(Math.abs((L.hullWhite.ASH!.params.sigma as number) - 0.007)).toBeLessThan(1e-7);
    expect(L.reports.hullWhite.DOM!.params).toEqual(L.hullWhite.DOM!.params);
  });

  // Fang & Oosterlee (2008) Heston test parameters (published.md, from memory) generate the EQD grid.
  it('gives the deterministic-rate Heston variant the generating parameters back', () => {
    const h = variant('heston').spec.equities.find((e) => e.name === 'EQD')!.dynamics;
    expect(h.kind).toBe('heston');
    if (h.kind === 'heston') {
      expect(Math.abs(h.rho - FO_HESTON.rho), `rho ${h.rho} vs ${FO_HESTON.rho}`).toBeLessThan(5e-3);
      expect(Math.abs(h.v0 / FO_HESTON.v0 - 1), `v0 ${h.v0} vs ${FO_HESTON.v0}`).toBeLessThan(2e-3);
      expect(L.heston.EQD).toEqual({ v0: h.v0, kappa: h.kappa, theta: h.theta, sigma: h.sigma, rho: h.rho });
      expect(L.reports.heston.EQD!.params).toEqual(L.heston.EQD);
    }
  });

  // Rabinovitch (1989); Brigo & Mercurio (2006) Ch. 13–14: Black–Scholes refitted under Hull–White prices each
  // ATM-forward target at its market vol (effective vol of the Gaussian-rate variance), to 1e-10 in vol.
  it('refits Black–Scholes under stochastic rates so each target vanilla still matches (closed-form check)', () => {
    const v = variant('bs+hw(DOM)');
    const e = v.spec.equities.find((x) => x.name === 'EQD')!;
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
          hw: v.spec.rates.DOM!.hw!,
          rho: 0.2,
        });
        const mkt = gridVolAt(eq, curve, T, F);
        expect(Math.abs(r.effectiveVol - mkt), `T=${T}: model ${r.effectiveVol}, market ${mkt}`).toBeLessThan(
          1e-10,
        );
      }
    // The foreign equity keeps deterministic ASH rates in this variant.
    expect(v.spec.rates.ASH!.hw).toBeUndefined();
    expect(L.reports.variants['bs+hw(DOM)']!.equities.EQF!.model).toBe('bs');
  });

  it('calibrates a variant to the same parameters whatever other variants the ladder holds', () => {
    const small = calibrateLadder({ ...req, candidates: ['stochVol', 'domesticRate'] });
    const one = small.variants.find((v) => v.id === 'heston+hw(DOM)')!;
    expect(one.spec.equities).toEqual(variant('heston+hw(DOM)').spec.equities);
    expect(one.calibration.fit).toEqual(variant('heston+hw(DOM)').calibration.fit);
  });

  it('carries the FX pair of the foreign equity with its quanto correlation', () => {
    const s = variant('bs').spec;
    expect(s.fx).toEqual([{ name: 'ASH/DOM', foreign: 'ASH', spot: 2, vol: 0.1 }]);
    const n = s.correlation.names;
    expect(s.correlation.matrix[n.indexOf('eq:EQF')]![n.indexOf('fx:ASH/DOM')]).toBe(-0.2);
  });

  it('gives the Monte Carlo-corrected refit the study’s paths, its own seed and fine steps', () => {
    const base = { snapshot: snap, analysis: basis, candidates: req.candidates, required: [] };
    const mc = studyLadderRequest({
      ...base,
      settings: { ...DEFAULT_SETTINGS, hestonRefit: 'monteCarlo', seed: 'run-7', paths: 131072 },
    });
    // Auxiliary paths = 131072 × 0.25 = 32768 (≥ 16384); step at most half a month.
    expect(mc.hestonMcRefit).toEqual({ paths: 32768, seed: 'run-7/heston-refit', maxStep: 1 / 24 });
    const small = studyLadderRequest({
      ...base,
      settings: { ...DEFAULT_SETTINGS, hestonRefit: 'monteCarlo', paths: 8192 },
    });
    expect(small.hestonMcRefit!.paths).toBe(16384);
    expect(studyLadderRequest({ ...base, settings: DEFAULT_SETTINGS }).hestonMcRefit).toBeUndefined();
  });

  it('asks for rate vols when a currency with a stochastic rate has none', () => {
    const s2 = { ...snap, rateVols: { DOM: snap.rateVols!.DOM! } };
    expect(() => fitHullWhite(s2, 'ASH', 5)).toThrow(
      /market\.rateVols\.ASH must give caplet or swaption vols/,
    );
    expect(() =>
      calibrateLadder({
        ...req,
        snapshot: s2,
        analysis: snapshotLadderBasis(s2, { equities: ['EQF'] }),
        candidates: ['foreignRate'],
      }),
    ).toThrow(/rateVols\.ASH must give caplet or swaption vols/);
  });

  it('reads FX from the quote and reports the quanto correlation with its plausible range', () => {
    const fx = calibrateFx(snap, 'ASH/DOM', ['EQF']);
    expect(fx.spec).toEqual({ name: 'ASH/DOM', foreign: 'ASH', spot: 2, vol: 0.1 });
    expect(fx.quanto.EQF).toEqual({ rho: -0.2, range: [-0.5, 0.3] });
  });
});
