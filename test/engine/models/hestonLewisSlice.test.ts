import { describe, expect, it } from 'vitest';
import {
  bsPrice,
  hestonCharFn,
  hestonCos,
  hestonCosSlice,
  hestonExponentShiftedGrid,
  hestonLewis,
  LEWIS_RANGE_WIDTH,
  type HestonMarket,
  type HestonParams,
} from '../../../src/engine/models/index.ts';
import { hestonLewisSlice } from '../../../src/engine/models/hestonLewisSlice.ts';
import { Complex } from '../../../src/engine/math/complex.ts';
import { expectClose } from '../../helpers/expectClose.ts';

const P = (v0: number, kappa: number, theta: number, sigma: number, rho: number): HestonParams => ({
  v0,
  kappa,
  theta,
  sigma,
  rho,
});
// Andersen (2008) QE paper Case I (from memory); value re-computed in /work/shared/reference/published.md
// (QuantLib Gauss–Lobatto and an independent Lewis integral: 13.084670137).
const caseI: HestonMarket = { S: 100, T: 10, r: 0, q: 0, params: P(0.04, 0.5, 0.04, 1, -0.9) };

describe('shifted-contour exponent (inlined) against the Complex reference', () => {
  it('equals ln φ(u − i·shift) of hestonCharFn to 1e-12 for shifts ½ and 0.3 and u up to 200', () => {
    const us = Float64Array.of(0, 0.01, 0.3, 1, 2.5, 7, 20, 55, 120, 200);
    for (const m of [caseI.params, P(0.0175, 1.5768, 0.0398, 0.5751, -0.5711), P(0.09, 0.8, 0.05, 0.4, 0.3)])
      for (const T of [0.1, 1, 10])
        for (const shift of [0.5, 0.3]) {
          const re = new Float64Array(us.length);
          const im = new Float64Array(us.length);
          hestonExponentShiftedGrid(m, T, us, shift, re, im);
          us.forEach((u, j) => {
            const phi = hestonCharFn(m, T, Complex.of(u, -shift));
            const got = Complex.of(re[j]!, im[j]!).exp();
            const tol = 1e-12 * Math.max(1, phi.abs());
            expectClose(`Re φ T=${T} shift=${shift} u=${u} ${JSON.stringify(m)}`, got.re, phi.re, tol);
            expectClose(`Im φ T=${T} shift=${shift} u=${u} ${JSON.stringify(m)}`, got.im, phi.im, tol);
          });
        }
  });
});

describe('Lewis integral on Gauss–Legendre panels', () => {
  it('prices Andersen (2008) Case I (K=100) to 1e-7 at tol 1e-7 and to 1e-9 at the default tol', () => {
    // Published 13.0847 (Andersen 2008, from memory); re-computed 13.084670137 (published.md).
    const a = hestonLewisSlice({ ...caseI, strikes: [100], tol: 1e-7 });
    expectClose('Case I tol 1e-7', a.prices[0]!, 13.084670137, 1e-7);
    expect(a.converged).toBe(true);
    const b = hestonLewisSlice({ ...caseI, strikes: [100] });
    expectClose('Case I default tol', b.prices[0]!, 13.084670137, 1e-9);
  });

  it('prices the published long-dated cases: Kahl & Jäckel (2005) K=200 T=10 and Andersen (2008) Case II', () => {
    // Kahl & Jäckel (2005), QuantLib test-suite testKahlJaeckelCase: re-computed 4.95211472088 (published.md).
    const kj = hestonLewisSlice({
      S: 100,
      T: 10,
      r: 0,
      q: 0,
      params: P(0.16, 1, 0.16, 2, -0.8),
      strikes: [200],
    });
    expectClose('Kahl–Jäckel', kj.prices[0]!, 4.95211472088, 1e-9);
    // Andersen (2008) Case II (from memory, low confidence): re-computed 16.6492229204 (published.md).
    const a2 = hestonLewisSlice({
      S: 100,
      T: 15,
      r: 0,
      q: 0,
      params: P(0.04, 0.3, 0.04, 0.9, -0.5),
      strikes: [100],
    });
    expectClose('Andersen Case II', a2.prices[0]!, 16.6492229204, 1e-9);
  });

  it('agrees with the adaptive Lewis integral to 1e-8 on a seeded random grid, T from 0.05 to 30, K/S 0.1..10', () => {
    // Park–Miller minimal standard generator (seeded; common practice).
    let seed = 11;
    const rnd = () => {
      seed = (seed * 16807) % 2147483647;
      return seed / 2147483647;
    };
    const maturities = [0.05, 0.5, 1, 3, 10, 30];
    for (let n = 0; n < 24; n++) {
      const T = maturities[n % maturities.length]!;
      const params = P(
        0.005 + rnd() * 0.3,
        0.2 + rnd() * 6,
        0.005 + rnd() * 0.3,
        0.05 + rnd() * 1.5,
        -0.95 + rnd() * 1.6,
      );
      const m: HestonMarket = { S: 100, T, r: 0.02, q: 0.01, params };
      const strikes = [10, 50, 80, 100, 125, 200, 1000];
      const s = hestonLewisSlice({ ...m, strikes, types: 'put' });
      expect(s.converged).toBe(true);
      strikes.forEach((K, i) =>
        expectClose(
          `T=${T} ${JSON.stringify(params)} K=${K}`,
          s.prices[i]!,
          hestonLewis({ ...m, type: 'put', K }),
          1e-8,
        ),
      );
    }
  });

  it('agrees with the COS expansion (second method) on Case I over K/S = 0.5..2 to 1e-8', () => {
    const strikes = [50, 70, 100, 140, 200];
    const lewis = hestonLewisSlice({ ...caseI, strikes, types: 'call', tol: 1e-9 });
    const cos = hestonCosSlice({ ...caseI, strikes, types: 'call', options: { method: 'cos', tol: 1e-9 } });
    strikes.forEach((K, i) => expectClose(`Case I K=${K}`, lewis.prices[i]!, cos.prices[i]!, 1e-8));
  });

  it('gives Black–Scholes with vol √θ when σ → 0 and v0 = θ (limit)', () => {
    const theta = 0.0625;
    const m: HestonMarket = { S: 100, T: 1.5, r: 0.02, q: 0.01, params: P(theta, 2, theta, 1e-7, -0.5) };
    const strikes = [70, 100, 140];
    const s = hestonLewisSlice({ ...m, strikes, types: 'call' });
    strikes.forEach((K, i) => {
      const bs = bsPrice({ type: 'call', S: 100, K, T: 1.5, r: 0.02, q: 0.01, vol: Math.sqrt(theta) });
      expectClose(`σ→0 K=${K}`, s.prices[i]!, bs, 1e-6);
    });
  });

  it('satisfies put–call parity C − P = S e^{−qT} − K e^{−rT} (common practice)', () => {
    const m: HestonMarket = { ...caseI, r: 0.03, q: 0.01 };
    const strikes = [60, 100, 160];
    const c = hestonLewisSlice({ ...m, strikes, types: 'call' }).prices;
    const p = hestonLewisSlice({ ...m, strikes, types: 'put' }).prices;
    strikes.forEach((K, i) =>
      expectClose(
        `parity K=${K}`,
        c[i]! - p[i]!,
        100 * Math.exp(-0.01 * 10) - K * Math.exp(-0.03 * 10),
        1e-10,
      ),
    );
  });

  it('rejects bad input naming the field', () => {
    expect(() => hestonLewisSlice({ ...caseI, strikes: [] })).toThrow(/heston\.strikes/);
    expect(() => hestonLewisSlice({ ...caseI, strikes: [100, -1] })).toThrow(/heston\.strikes\[1\]/);
    expect(() => hestonLewisSlice({ ...caseI, strikes: [100], tol: 0 })).toThrow(/heston\.tol/);
  });
});

describe('slice pricer route (auto)', () => {
  it('prices Case I by the Lewis panels (range wider than the switch width) and says so, to 1e-7 at tol 1e-7', () => {
    const s = hestonCosSlice({ ...caseI, strikes: [100], types: 'call', options: { tol: 1e-7 } });
    expect(s.method).toBe('lewis');
    expect(s.b - s.a).toBeGreaterThan(LEWIS_RANGE_WIDTH);
    expectClose('Case I auto', s.prices[0]!, 13.084670137, 1e-7);
    expectClose(
      'Case I single',
      hestonCos({ ...caseI, type: 'call', K: 100, options: { tol: 1e-7 } }),
      13.084670137,
      1e-7,
    );
  });

  it('keeps COS where its range is narrow, and when N, L or a range is given', () => {
    const lewisMkt: HestonMarket = { S: 100, T: 1, r: 0.01, q: 0.02, params: P(0.04, 4, 0.25, 1, -0.5) };
    expect(hestonCosSlice({ ...lewisMkt, strikes: [100] }).method).toBe('cos');
    expect(hestonCosSlice({ ...caseI, strikes: [100], options: { L: 20 } }).method).toBe('cos');
    expect(hestonCosSlice({ ...caseI, strikes: [100], options: { method: 'cos', tol: 1e-7 } }).method).toBe(
      'cos',
    );
    expect(hestonCosSlice({ ...lewisMkt, strikes: [100], options: { method: 'lewis' } }).method).toBe(
      'lewis',
    );
    expect(() =>
      hestonCosSlice({ ...lewisMkt, strikes: [100], options: { method: 'fourier' as never } }),
    ).toThrow(/cos\.options\.method/);
  });
});
