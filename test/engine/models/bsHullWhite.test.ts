import { describe, expect, it } from 'vitest';
import { bsHullWhite, bsPrice } from '../../../src/engine/models/index.ts';
import { flatCurve, makeCurve } from '../../../src/engine/market/curve.ts';
import { integrateAdaptive } from '../../../src/engine/math/quadrature.ts';
import { expectClose } from '../../helpers/expectClose.ts';

describe('Black–Scholes with Hull–White rates', () => {
  const curve = flatCurve('DOM', 0.03);

  it('gives Black–Scholes when the rate vol is zero (limit)', () => {
    for (const K of [60, 100, 150])
      for (const type of ['call', 'put'] as const) {
        const v = bsHullWhite({
          type,
          S: 100,
          K,
          T: 4,
          q: 0.01,
          curve,
          vol: 0.25,
          hw: { a: 0.1, sigma: 0 },
          rho: 0.4,
        });
        expectClose(
          `σ_r = 0 ${type} K=${K}`,
          v.price,
          bsPrice({ type, S: 100, K, T: 4, r: 0.03, q: 0.01, vol: 0.25 }),
          1e-12,
        );
      }
  });

  it('has a forward variance equal to the quadrature of σ_S² + 2ρσ_Sσ_rB + σ_r²B² (second method, Rabinovitch 1989)', () => {
    const a = 0.08;
    const sr = 0.011;
    const rho = -0.35;
    const T = 6;
    const vol = { volTimes: [1, 3, 6], vols: [0.3, 0.22, 0.18] };
    const res = bsHullWhite({ type: 'call', S: 100, K: 100, T, q: 0, curve, vol, hw: { a, sigma: sr }, rho });
    const sS = (t: number) => (t <= 1 ? 0.3 : t <= 3 ? 0.22 : 0.18);
    const B = (t: number) => (1 - Math.exp(-a * (T - t))) / a;
    const f = (t: number) => sS(t) ** 2 + 2 * rho * sS(t) * sr * B(t) + sr * sr * B(t) ** 2;
    const q =
      integrateAdaptive(f, 0, 1, { absTol: 1e-15 }) +
      integrateAdaptive(f, 1, 3, { absTol: 1e-15 }) +
      integrateAdaptive(f, 3, 6, { absTol: 1e-15 });
    expectClose('variance', res.variance, q, 1e-13);
  });

  it('increases with equity–rate correlation and matches the zero-correlation variance σ_S²T + σ_r²∫B² (limit)', () => {
    const args = {
      type: 'call' as const,
      S: 100,
      K: 100,
      T: 10,
      q: 0,
      curve,
      vol: 0.2,
      hw: { a: 0.05, sigma: 0.01 },
    };
    const lo = bsHullWhite({ ...args, rho: -0.5 }).price;
    const mid = bsHullWhite({ ...args, rho: 0 });
    const hi = bsHullWhite({ ...args, rho: 0.5 }).price;
    expect(lo).toBeLessThan(mid.price);
    expect(mid.price).toBeLessThan(hi);
    const a = 0.05;
    const intB2 = (10 - (2 * (1 - Math.exp(-a * 10))) / a + (1 - Math.exp(-2 * a * 10)) / (2 * a)) / (a * a);
    expectClose('ρ = 0 variance', mid.variance, 0.04 * 10 + 1e-4 * intB2, 1e-14);
  });

  it('satisfies put–call parity C − P = S e^{−qT} − K P(0,T) on a sloped curve (common practice)', () => {
    const c2 = makeCurve({ currency: 'DOM', times: [1, 5, 10], zeroRates: [0.01, 0.025, 0.03] });
    const args = {
      S: 100,
      K: 110,
      T: 7,
      q: 0.02,
      curve: c2,
      vol: 0.2,
      hw: { a: 0.05, sigma: 0.01 },
      rho: 0.3,
    };
    const c = bsHullWhite({ ...args, type: 'call' }).price;
    const p = bsHullWhite({ ...args, type: 'put' }).price;
    expectClose('parity', c - p, 100 * Math.exp(-0.14) - 110 * c2.df(7), 1e-12);
  });

  it('rejects bad input naming the field', () => {
    const args = {
      type: 'call' as const,
      S: 100,
      K: 100,
      T: 1,
      q: 0,
      curve,
      vol: 0.2,
      hw: { a: 0.05, sigma: 0.01 },
      rho: 0,
    };
    expect(() => bsHullWhite({ ...args, rho: 2 })).toThrow(/bshw\.rho/);
    expect(() => bsHullWhite({ ...args, vol: -0.1 })).toThrow(/bshw\.vol/);
    expect(() => bsHullWhite({ ...args, T: 0 })).toThrow(/bshw\.T/);
    expect(() => bsHullWhite({ ...args, vol: { volTimes: [1, 0.5], vols: [0.2, 0.3] } })).toThrow(
      /bshw\.vol\.volTimes\[1\]/,
    );
  });
});
