import { describe, expect, it } from 'vitest';
import {
  bsForwardVols,
  bsHullWhiteRefit,
  bsTargetsFromGrid,
} from '../../../src/engine/calibration/blackScholesCalibration.ts';
import { makeCurve } from '../../../src/engine/market/index.ts';
import { bsHullWhite } from '../../../src/engine/models/index.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import { EXPIRIES, FO_HESTON, HULL_HW, MONEYNESS, flatCurveSpec, hestonGrid } from './syntheticMarket.ts';

const curveSpec = flatCurveSpec('DOM', 0.03);
const curve = makeCurve(curveSpec);

describe('Black–Scholes term structure', () => {
  it('turns implied vols into forward vols by additivity of variance', () => {
    // σ²_fwd = (σ₂²T₂ − σ₁²T₁)/(T₂ − T₁) (common practice): 0.2 at 1y and 0.25 at 2y give √0.085.
    const r = bsForwardVols([
      { expiry: 1, strike: 100, vol: 0.2 },
      { expiry: 2, strike: 100, vol: 0.25 },
    ]);
    expect(r.dynamics.vols[0]).toBeCloseTo(0.2, 14);
    expect(r.dynamics.vols[1]).toBeCloseTo(Math.sqrt(0.085), 14);
    expect(r.dynamics.volTimes).toEqual([1, 2]);
  });

  it('rejects quotes implying negative forward variance and names both expiries', () => {
    try {
      bsForwardVols(
        [
          { expiry: 1, strike: 100, vol: 0.3 },
          { expiry: 2, strike: 100, vol: 0.2 },
        ],
        'equities.X.bsTargets',
      );
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(EngineError);
      const i = (e as EngineError).issues[0]!;
      expect(i.code).toBe('E_NEGATIVE_FORWARD_VARIANCE');
      expect(i.field).toBe('equities.X.bsTargets[0..1]');
      expect(i.message).toMatch(/T = 1 and T = 2/);
    }
  });

  it('reads ATM-forward targets from a grid', () => {
    const g = hestonGrid({
      ccy: 'DOM',
      spot: 100,
      divYield: 0,
      curve: curveSpec,
      heston: FO_HESTON,
      expiries: EXPIRIES,
      moneyness: MONEYNESS,
    });
    const t = bsTargetsFromGrid(g, curve);
    expect(t.map((x) => x.expiry)).toEqual(EXPIRIES);
    t.forEach((x) => expect(x.strike).toBeCloseTo(100 * Math.exp(0.03 * x.expiry), 8));
  });
});

describe('Black–Scholes refit under Hull–White rates', () => {
  const targets = [0.5, 1, 2, 5, 10].map((T, i) => ({
    expiry: T,
    strike: 100 * Math.exp(0.03 * T),
    vol: 0.2 + 0.005 * i,
  }));
  for (const rho of [-0.5, 0, 0.5]) {
    it(`matches every target when repriced by the models layer BS–HW closed form (ρ = ${rho})`, () => {
      const r = bsHullWhiteRefit({ targets, hw: HULL_HW, rhoSR: rho, spot: 100, divYield: 0, curve });
      targets.forEach((t) => {
        const p = bsHullWhite({
          type: 'call',
          S: 100,
          K: t.strike,
          T: t.expiry,
          q: 0,
          curve,
          vol: r.dynamics,
          hw: HULL_HW,
          rho,
        });
        expect(Math.abs(p.effectiveVol - t.vol), `T=${t.expiry}: ${p.effectiveVol} vs ${t.vol}`).toBeLessThan(
          1e-12,
        );
      });
    });
  }

  it('reduces to the deterministic-rate forward vols as the rate vol goes to zero', () => {
    const det = bsForwardVols(targets);
    const r = bsHullWhiteRefit({
      targets,
      hw: { a: 0.08, sigma: 1e-13 },
      rhoSR: 0.5,
      spot: 100,
      divYield: 0,
      curve,
    });
    r.dynamics.vols.forEach((v, i) => expect(Math.abs(v - det.dynamics.vols[i]!)).toBeLessThan(1e-9));
  });

  it('lowers the equity vol when rates add variance (ρ = 0)', () => {
    const det = bsForwardVols(targets);
    const r = bsHullWhiteRefit({ targets, hw: HULL_HW, rhoSR: 0, spot: 100, divYield: 0, curve });
    r.dynamics.vols.forEach((v, i) => expect(v).toBeLessThan(det.dynamics.vols[i]!));
  });

  it('reports a target the rate variance alone exceeds, naming the expiry', () => {
    expect(() =>
      bsHullWhiteRefit({
        targets: [{ expiry: 10, strike: 100, vol: 0.02 }],
        hw: { a: 0.01, sigma: 0.03 },
        rhoSR: 0,
        spot: 100,
        divYield: 0,
        curve,
        field: 'bs',
      }),
    ).toThrow(/bs\[0\] cannot be matched under Hull–White rates/);
  });
});
