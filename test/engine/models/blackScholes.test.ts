import { describe, expect, it } from 'vitest';
import {
  black76,
  bsGreeks,
  bsImpliedVol,
  bsPrice,
  bsPriceCashDividends,
  garmanKohlhagen,
  type BsInput,
} from '../../../src/engine/models/index.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import { expectClose } from '../../helpers/expectClose.ts';

// Each row: inputs, the value, its source. Values re-computed independently in /work/shared/reference/published.md;
// the 11-digit numbers are those re-computations, the tolerance covers the printed digits of the source.
const priceCases: { src: string; p: BsInput; value: number; tol: number }[] = [
  {
    src: 'Hull, OFOD, BSM chapter worked example (8th ed. Ex. 15.6), call (from memory)',
    p: { type: 'call', S: 42, K: 40, T: 0.5, r: 0.1, q: 0, vol: 0.2 },
    value: 4.75942239287,
    tol: 1e-10,
  },
  {
    src: 'Hull, OFOD, same example, put (from memory)',
    p: { type: 'put', S: 42, K: 40, T: 0.5, r: 0.1, q: 0, vol: 0.2 },
    value: 0.8085993729,
    tol: 1e-9,
  },
  {
    src: 'Hull, OFOD, options on stock indices worked example (from memory)',
    p: { type: 'call', S: 930, K: 900, T: 60 / 360, r: 0.08, q: 0.03, vol: 0.2 },
    value: 51.8329567965,
    tol: 1e-9,
  },
  {
    src: 'Haug (1998) pp. 2-8, generalised BSM example (from memory; also in QuantLib test-suite)',
    p: { type: 'call', S: 60, K: 65, T: 0.25, r: 0.08, q: 0, vol: 0.3 },
    value: 2.13336844492,
    tol: 1e-10,
  },
  {
    src: 'Haug (1998) pp. 2-8, Merton 1973 continuous dividend yield (from memory; also in QuantLib test-suite)',
    p: { type: 'put', S: 100, K: 95, T: 0.5, r: 0.1, q: 0.05, vol: 0.2 },
    value: 2.46478764676,
    tol: 1e-10,
  },
  {
    src: 'Haug (1998) pp. 2-8, Black-76 F=19 put (from memory; also in QuantLib test-suite)',
    p: { type: 'put', S: 19, K: 19, T: 0.75, r: 0.1, q: 0.1, vol: 0.28 },
    value: 1.70105072524,
    tol: 1e-10,
  },
  {
    src: 'Haug (1998) pp. 2-8, Black-76 F=19 call (from memory; also in QuantLib test-suite)',
    p: { type: 'call', S: 19, K: 19, T: 0.75, r: 0.1, q: 0.1, vol: 0.28 },
    value: 1.70105072524,
    tol: 1e-10,
  },
  {
    src: 'Haug (1998) pp. 2-8 (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'put', S: 75, K: 70, T: 0.5, r: 0.1, q: 0.05, vol: 0.35 },
    value: 4.08695382864,
    tol: 1e-10,
  },
  {
    src: 'Haug (1998) p. 24 table (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'call', S: 90, K: 100, T: 0.1, r: 0.1, q: 0.1, vol: 0.15 },
    value: 0.0204901485365,
    tol: 1e-12,
  },
  {
    src: 'Haug (1998) p. 24 table (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'call', S: 100, K: 100, T: 0.1, r: 0.1, q: 0.1, vol: 0.25 },
    value: 3.12172069818,
    tol: 1e-10,
  },
  {
    src: 'Haug (1998) p. 24 table (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'call', S: 110, K: 100, T: 0.5, r: 0.1, q: 0.1, vol: 0.35 },
    value: 15.3085997611,
    tol: 1e-9,
  },
  {
    src: 'Haug (1998) p. 24 table (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'put', S: 90, K: 100, T: 0.5, r: 0.1, q: 0.1, vol: 0.35 },
    value: 14.4451716755,
    tol: 1e-9,
  },
  {
    src: 'Haug (1998) p. 24 table (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'put', S: 110, K: 100, T: 0.1, r: 0.1, q: 0.1, vol: 0.15 },
    value: 0.0407790579979,
    tol: 1e-12,
  },
  {
    src: 'Haug (1998) p. 27 (QuantLib test-suite/europeanoption.cpp)',
    p: { type: 'call', S: 42, K: 40, T: 0.75, r: 0.04, q: 0.08, vol: 0.35 },
    value: 5.09754771773,
    tol: 1e-10,
  },
];

describe('Black–Scholes–Merton prices', () => {
  for (const c of priceCases) {
    it(`matches ${c.src}: ${c.p.type} S=${c.p.S} K=${c.p.K}`, () => {
      expectClose(c.src, bsPrice(c.p), c.value, c.tol);
    });
  }

  it('gives d1 = 0.7693 and d2 = 0.6278 on the Hull example through delta and the call price', () => {
    // Hull, OFOD, BSM chapter worked example (from memory): d1 = 0.769262628106, d2 = 0.627841271869 (re-computed).
    const g = bsGreeks({ type: 'call', S: 42, K: 40, T: 0.5, r: 0.1, q: 0, vol: 0.2 });
    expectClose('N(d1) = delta', g.delta, 0.7791312909, 2e-9); // N(0.769262628106), common practice (normal cdf)
  });

  it('satisfies put–call parity C − P = S e^{−qT} − K e^{−rT} (common practice)', () => {
    for (const vol of [0.05, 0.3, 1.2])
      for (const K of [50, 100, 180]) {
        const p = { S: 100, K, T: 2, r: 0.03, q: 0.01, vol };
        const lhs = bsPrice({ ...p, type: 'call' }) - bsPrice({ ...p, type: 'put' });
        expectClose(`parity vol=${vol} K=${K}`, lhs, 100 * Math.exp(-0.02) - K * Math.exp(-0.06), 1e-11);
      }
  });

  it('tends to the discounted intrinsic value of the forward as vol → 0 (limit, common practice)', () => {
    const p = { type: 'call' as const, S: 100, K: 95, T: 1, r: 0.05, q: 0.02 };
    const intrinsic = 100 * Math.exp(-0.02) - 95 * Math.exp(-0.05);
    expectClose('vol = 0', bsPrice({ ...p, vol: 0 }), intrinsic, 1e-12);
    expectClose('vol = 1e-9', bsPrice({ ...p, vol: 1e-9 }), intrinsic, 1e-10);
  });

  it('prices Garman–Kohlhagen as q = r_f: Haug (1998) pp. 2-8 currency call 0.0291 (from memory; QuantLib test-suite)', () => {
    expectClose(
      'GK',
      garmanKohlhagen({ type: 'call', S: 1.56, K: 1.6, T: 0.5, rDomestic: 0.06, rForeign: 0.08, vol: 0.12 }),
      0.0290992531494,
      1e-12,
    );
  });

  it('prices Black-76: Hull, OFOD futures options worked example put 1.12 (from memory)', () => {
    const F = 20;
    expectClose(
      'black76',
      black76({ type: 'put', F, K: 20, T: 120 / 360, df: Math.exp(-0.09 * (120 / 360)), vol: 0.25 }),
      1.11664145656,
      1e-10,
    );
  });

  it('prices the escrowed-dividend call: Hull, OFOD, dividend-paying stock example 3.67 (from memory)', () => {
    const v = bsPriceCashDividends({
      type: 'call',
      S: 40,
      K: 40,
      T: 0.5,
      r: 0.09,
      q: 0,
      vol: 0.3,
      dividends: [
        { t: 2 / 12, amount: 0.5 },
        { t: 5 / 12, amount: 0.5 },
      ],
    });
    expectClose('escrowed', v, 3.67123320905, 1e-9);
  });
});

describe('Black–Scholes Greeks, Haug (1998) pp. 11-16 (QuantLib test-suite/europeanoption.cpp)', () => {
  it('delta call 0.5946, put −0.3566 and put elasticity −4.8775', () => {
    const p = { S: 105, K: 100, q: 0.1, r: 0.1, T: 0.5, vol: 0.36 };
    expectClose('delta call', bsGreeks({ ...p, type: 'call' }).delta, 0.59462865973, 1e-10);
    const put = bsGreeks({ ...p, type: 'put' });
    expectClose('delta put', put.delta, -0.356600764771, 1e-10);
    expectClose('elasticity', (put.delta * 105) / put.price, -4.87749854132, 1e-9);
  });
  it('gamma 0.0278 and vega 18.9358 (per 1.00 of vol)', () => {
    const g = bsGreeks({ type: 'call', S: 55, K: 60, q: 0, r: 0.1, T: 0.75, vol: 0.3 });
    expectClose('gamma', g.gamma, 0.0278211604769, 1e-12);
    expectClose('vega', g.vega, 18.9357773496, 1e-9);
    const gp = bsGreeks({ type: 'put', S: 55, K: 60, q: 0, r: 0.1, T: 0.75, vol: 0.3 });
    expectClose('put gamma', gp.gamma, 0.0278211604769, 1e-12);
  });
  it('theta −31.1924 per year (−0.0855 per day)', () => {
    const g = bsGreeks({ type: 'put', S: 430, K: 405, q: 0.05, r: 0.07, T: 1 / 12, vol: 0.2 });
    expectClose('theta', g.theta, -31.1923503043, 1e-8);
    expectClose('theta/365', g.theta / 365, -0.0854584939843, 1e-11);
  });
  it('rho 38.7325 and dividend rho 42.2254 (per 1.00)', () => {
    expectClose(
      'rho',
      bsGreeks({ type: 'call', S: 72, K: 75, q: 0, r: 0.09, T: 1, vol: 0.19 }).rho,
      38.7325050173,
      1e-8,
    );
    expectClose(
      'dividend rho',
      bsGreeks({ type: 'put', S: 500, K: 490, q: 0.05, r: 0.08, T: 0.25, vol: 0.15 }).dividendRho,
      42.2253633691,
      1e-8,
    );
  });
  it('agree with central finite differences of the price (second method)', () => {
    for (const type of ['call', 'put'] as const) {
      const p: BsInput = { type, S: 100, K: 110, T: 1.5, r: 0.03, q: 0.015, vol: 0.25 };
      const g = bsGreeks(p);
      const h = 1e-4;
      const fd = (f: (x: number) => BsInput) => (bsPrice(f(h)) - bsPrice(f(-h))) / (2 * h);
      // Central differences carry an O(h²) error: tolerance 1e-7 relative plus 1e-7 absolute.
      const tol = (x: number) => 1e-7 * (1 + Math.abs(x));
      expectClose(
        'delta',
        g.delta,
        fd((e) => ({ ...p, S: p.S + e })),
        tol(g.delta),
      );
      expectClose(
        'vega',
        g.vega,
        fd((e) => ({ ...p, vol: p.vol + e })),
        tol(g.vega),
      );
      expectClose(
        'rho',
        g.rho,
        fd((e) => ({ ...p, r: p.r + e })),
        tol(g.rho),
      );
      expectClose(
        'dividend rho',
        g.dividendRho,
        fd((e) => ({ ...p, q: p.q + e })),
        tol(g.dividendRho),
      );
      expectClose('theta', g.theta, -fd((e) => ({ ...p, T: p.T + e })), tol(g.theta));
      const hs = 1e-2;
      const gfd =
        (bsPrice({ ...p, S: p.S + hs }) - 2 * bsPrice(p) + bsPrice({ ...p, S: p.S - hs })) / (hs * hs);
      expectClose('gamma', g.gamma, gfd, 1e-6);
    }
  });
});

describe('Black–Scholes implied volatility', () => {
  it('recovers 0.141 from a 4.3-cent 4-month currency call: Hull, OFOD (from memory, low confidence)', () => {
    const iv = bsImpliedVol({ type: 'call', price: 0.043, S: 1.6, K: 1.6, T: 4 / 12, r: 0.08, q: 0.11 });
    expectClose('GBP call iv', iv, 0.141119384378, 1e-10);
  });

  it('round-trips over moneyness 0.2..5, T 0.01..30, vol 0.01..2, both types, where the price carries the vol', () => {
    let worst = 0;
    let count = 0;
    for (const m of [0.2, 0.3, 0.5, 0.8, 0.95, 1, 1.05, 1.3, 2, 3, 5])
      for (const T of [0.01, 0.1, 1, 5, 30])
        for (const vol of [0.01, 0.05, 0.2, 0.5, 1, 2])
          for (const type of ['call', 'put'] as const) {
            const p = { type, S: 100, K: 100 * m, T, r: 0.03, q: 0.01 };
            const price = bsPrice({ ...p, vol });
            const F = 100 * Math.exp(0.02 * T);
            const df = Math.exp(-0.03 * T);
            const intrinsic = type === 'call' ? Math.max(df * (F - p.K), 0) : Math.max(df * (p.K - F), 0);
            const timeValue = price - intrinsic;
            // Skip quotes whose time value is lost in rounding (in-the-money, tiny vol) or underflows.
            if (!(timeValue > 1e-9 * price) || !(price > 1e-280)) continue;
            const iv = bsImpliedVol({ ...p, price });
            const g = bsGreeks({ ...p, vol });
            // Attainable accuracy: rounding in the price and in the parity conversion (≈ 50 ulp of the price)
            // divided by vega, plus 1e-12 relative.
            const tol = 1e-12 * vol + (1e-14 * price) / Math.max(g.vega, 1e-300);
            const err = Math.abs(iv - vol);
            if (err > tol)
              throw new Error(
                `iv m=${m} T=${T} vol=${vol} ${type}: price ${price}, computed ${iv}, tol ${tol}`,
              );
            worst = Math.max(worst, err / vol);
            count++;
          }
    expect(count).toBeGreaterThan(450);
    expect(worst).toBeLessThan(1e-8);
  });

  it('round-trips over K/S 0.05..20, T from 1 day to 30 years, vol 1 %..300 %, both types, where the price carries the vol', () => {
    let worst = 0;
    let count = 0;
    for (const m of [0.05, 0.1, 0.2, 0.5, 0.9, 0.99, 1, 1.01, 1.1, 2, 5, 10, 20])
      for (const T of [1 / 365, 1 / 52, 0.25, 1, 10, 30])
        for (const vol of [0.01, 0.03, 0.1, 0.3, 1, 2, 3])
          for (const type of ['call', 'put'] as const) {
            const p = { type, S: 100, K: 100 * m, T, r: 0.03, q: 0.01 };
            const price = bsPrice({ ...p, vol });
            const F = 100 * Math.exp(0.02 * T);
            const df = Math.exp(-0.03 * T);
            const intrinsic = type === 'call' ? Math.max(df * (F - p.K), 0) : Math.max(df * (p.K - F), 0);
            const bound = type === 'call' ? 100 * Math.exp(-0.01 * T) : p.K * df;
            // Skip quotes whose time value is lost in rounding, that underflow, or that sit at the upper bound.
            if (!(price - intrinsic > 1e-9 * price) || !(price > 1e-280) || !(price < bound)) continue;
            const iv = bsImpliedVol({ ...p, price });
            const g = bsGreeks({ ...p, vol });
            // Attainable accuracy: rounding in the price and the parity conversion over vega, plus 1e-12 relative.
            const tol = 1e-12 * vol + (1e-14 * Math.max(price, bound - price)) / Math.max(g.vega, 1e-300);
            const err = Math.abs(iv - vol);
            if (!(err <= tol))
              throw new Error(
                `iv K/S=${m} T=${T} vol=${vol} ${type}: price ${price}, expected ${vol}, computed ${iv}, tol ${tol}`,
              );
            // Worst relative error over the quotes whose price pins the vol to better than 1e-9 relative.
            if (tol < 1e-9 * vol) worst = Math.max(worst, err / vol);
            count++;
          }
    expect(count).toBeGreaterThan(700);
    expect(worst).toBeLessThan(1e-8);
  });

  it('recovers vols deep in the wings where prices are below 1e-100', () => {
    // K/F = 5, vol 5 %, T = 1: price about 1e-270 (normalised-price form without cancellation, Jäckel 2015 Sec. 2).
    const p = { type: 'call' as const, S: 100, K: 500, T: 1, r: 0, q: 0 };
    const price = bsPrice({ ...p, vol: 0.05 });
    expect(price).toBeGreaterThan(0);
    expect(price).toBeLessThan(1e-100);
    expectClose('deep OTM iv', bsImpliedVol({ ...p, price }), 0.05, 1e-10);
  });

  it('rejects prices below intrinsic or above the upper bound with E_PRICE_ARBITRAGE naming the field', () => {
    const p = { type: 'call' as const, S: 100, K: 90, T: 1, r: 0, q: 0 };
    expect(() => bsImpliedVol({ ...p, price: 5 })).toThrow(/iv\.price must be at least the intrinsic/);
    expect(() => bsImpliedVol({ ...p, price: 100 })).toThrow(/below the upper bound/);
    try {
      bsImpliedVol({ ...p, price: 5 });
    } catch (e) {
      expect(e).toBeInstanceOf(EngineError);
      expect((e as EngineError).code).toBe('E_PRICE_ARBITRAGE');
    }
  });
});

describe('Black–Scholes bad input', () => {
  const base: BsInput = { type: 'call', S: 100, K: 100, T: 1, r: 0.01, q: 0, vol: 0.2 };
  it.each([
    ['vol', { vol: -0.2 }, /bs\.vol must be a finite number >= 0/],
    ['vol', { vol: NaN }, /bs\.vol .*NaN/],
    ['T', { T: 0 }, /bs\.T must be a finite number > 0/],
    ['T', { T: -1 }, /bs\.T/],
    ['S', { S: 0 }, /bs\.S/],
    ['K', { K: NaN }, /bs\.K/],
  ])('throws EngineError naming %s', (_f, patch, re) => {
    expect(() => bsPrice({ ...base, ...(patch as Partial<BsInput>) })).toThrow(EngineError);
    expect(() => bsPrice({ ...base, ...(patch as Partial<BsInput>) })).toThrow(re as RegExp);
  });
});
