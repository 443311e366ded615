import { describe, expect, it } from 'vitest';
import seedrandom from 'seedrandom';
import {
  calibrateHullWhite,
  hullWhiteModelPrices,
  rateQuotes,
} from '../../../src/engine/calibration/hullWhiteCalibration.ts';
import { makeCurve } from '../../../src/engine/market/index.ts';
import { makeHullWhite } from '../../../src/engine/models/index.ts';
import { bachelierImpliedVol } from '../../../src/engine/calibration/blackFormulas.ts';
import type { RateVolSpec } from '../../../src/engine/market/types.ts';
import { HULL_HW, flatCurveSpec, hwCapletVols } from './syntheticMarket.ts';

const curveSpec = flatCurveSpec('DOM', 0.03);
const curve = makeCurve(curveSpec);
const EXP = [1, 2, 3, 4, 5, 7, 10, 12, 15, 20];

describe('Hull–White calibration', () => {
  it('prices the recomputed caplet case of published.md §3 through its quote path', () => {
    // Worked case constructed in /work/shared/reference/published.md §3 (QuantLib 1.29, AnalyticCapFloorEngine):
    // a=0.1, σ=0.01, flat 5% continuous, caplet on [1y, 2y], accrual 1, K=5%, notional 100 → 0.404159032308.
    const c5 = makeCurve(flatCurveSpec('X', 0.05));
    const q = rateQuotes(
      { instrument: 'caplet', type: 'normal', quotes: [{ expiry: 1, tenor: 1, strike: 0.05, vol: 0.01 }] },
      c5,
      'r',
    );
    // K = 5% is below the forward e^{0.05} − 1, so the quote is priced on its out-of-the-money side (a floorlet);
    // cap = floor + τ P(0,2) (F − K) (put–call parity, common practice).
    expect(q[0]!.isCall).toBe(false);
    const floor = 100 * hullWhiteModelPrices({ a: 0.1, sigma: 0.01 }, c5, q)[0]!;
    const cap = floor + 100 * q[0]!.annuity * (q[0]!.forward - 0.05);
    expect(Math.abs(cap - 0.404159032308), `got ${cap}`).toBeLessThan(1e-9);
  });

  for (const type of ['normal', 'lognormal'] as const) {
    it(`recovers a and σ from noiseless ${type} caplet vols (Hull problem parameters a = 0.08, σ = 0.01)`, () => {
      const spec = hwCapletVols(curveSpec, HULL_HW, EXP, type);
      const r = calibrateHullWhite({ currency: 'DOM', curve, rateVols: spec });
      const info = JSON.stringify({ got: r.params, rmse: r.rmseVol });
      expect(r.ok, info).toBe(true);
      expect(Math.abs(r.params.a - 0.08), info).toBeLessThan(1e-6);
      expect(Math.abs((r.params.sigma as number) - 0.01), info).toBeLessThan(1e-8);
      expect(r.volUnit).toBe(type === 'normal' ? 'bp' : 'vol points');
      expect(r.rmseVol).toBeLessThan(1e-6);
    });
  }

  it('honours the quote type: lognormal vols read as normal give a different, badly fitting model', () => {
    const spec = hwCapletVols(curveSpec, HULL_HW, EXP, 'lognormal');
    // Relabelled lognormal vols (~0.3) are rejected as implausible normal vols, with the fix.
    expect(() =>
      calibrateHullWhite({ currency: 'DOM', curve, rateVols: { ...spec, type: 'normal' } }),
    ).toThrow(/lognormal vol in a normal block/);
  });

  it('recovers a and σ from co-terminal swaption normal vols priced by Jamshidian', () => {
    // Quotes from the model layer's Jamshidian swaption (Jamshidian 1989), ATM, annual fixed leg, ending at 12y.
    const m = makeHullWhite(curve, { a: 0.05, sigma: 0.009 });
    const quotes = [1, 2, 3, 5, 7, 10].map((T) => {
      const tenor = 12 - T;
      const pay = Array.from({ length: tenor }, (_, k) => T + k + 1);
      const ann = pay.reduce((s, t) => s + curve.df(t), 0);
      const S = (curve.df(T) - curve.df(pay[pay.length - 1]!)) / ann;
      const price = m.swaption({ type: 'payer', expiry: T, payTimes: pay, strike: S });
      return {
        expiry: T,
        tenor,
        vol: bachelierImpliedVol({ forward: S, strike: S, expiry: T, df: ann, isCall: true, price }),
      };
    });
    const spec: RateVolSpec = { instrument: 'swaption', type: 'normal', frequency: 1, quotes };
    const r = calibrateHullWhite({ currency: 'DOM', curve, rateVols: spec });
    expect(Math.abs(r.params.a - 0.05), JSON.stringify(r.params)).toBeLessThan(1e-6);
    expect(Math.abs((r.params.sigma as number) - 0.009)).toBeLessThan(1e-8);
  });

  it('recovers piecewise-constant σ when a is known, each piece within 1e-7', () => {
    const hw = { a: 0.08, sigma: [0.012, 0.011, 0.0095, 0.009, 0.0085], sigmaTimes: [1, 2, 3, 5, 10] };
    const spec = hwCapletVols(curveSpec, hw, [1, 2, 3, 5, 10], 'normal');
    const r = calibrateHullWhite({ currency: 'DOM', curve, rateVols: spec, mode: 'piecewise', fixedA: 0.08 });
    const got = r.params.sigma as number[];
    hw.sigma.forEach((s, i) =>
      expect(Math.abs(got[i]! - s), `piece ${i}: ${got[i]} vs ${s}`).toBeLessThan(1e-7),
    );
    expect(r.params.sigmaTimes).toEqual([1, 2, 3, 5, 10]);
  });

  it('on seeded noisy quotes (0.3 bp) lands within 3 reported standard errors of a and σ', () => {
    const rng = seedrandom('hw-noise-1');
    const spec = hwCapletVols(curveSpec, HULL_HW, EXP, 'normal');
    const noisy = {
      ...spec,
      quotes: spec.quotes.map((q) => ({ ...q, vol: q.vol + 0.00003 * Math.sqrt(3) * (2 * rng() - 1) })),
    };
    const r = calibrateHullWhite({ currency: 'DOM', curve, rateVols: noisy });
    const sa = r.fit.standardErrors.a!;
    const ss = r.fit.standardErrors.sigma!;
    expect(Math.abs(r.params.a - 0.08), `a ${r.params.a} SE ${sa}`).toBeLessThan(3 * sa);
    expect(Math.abs((r.params.sigma as number) - 0.01), `σ ${r.params.sigma} SE ${ss}`).toBeLessThan(3 * ss);
    expect(sa).toBeLessThan(0.02);
  });

  it('rejects a block without its quote type, naming the field and the fix', () => {
    const spec = hwCapletVols(curveSpec, HULL_HW, EXP, 'normal') as Partial<RateVolSpec>;
    delete spec.type;
    expect(() => calibrateHullWhite({ currency: 'DOM', curve, rateVols: spec as RateVolSpec })).toThrow(
      /rateVols\.DOM\.type must state the quote type/,
    );
  });

  it('rejects a single quote when both a and σ are free', () => {
    const spec = hwCapletVols(curveSpec, HULL_HW, [5], 'normal');
    expect(() => calibrateHullWhite({ currency: 'DOM', curve, rateVols: spec })).toThrow(/at least 2 quotes/);
  });
});
