import { describe, it, expect } from 'vitest';
import { makeHullWhite } from '../../../src/engine/models/hullWhite.ts';
import { quantoForward, quantoEuropean } from '../../../src/engine/models/quanto.ts';
import { makeCurve } from '../../../src/engine/market/curve.ts';
import type { VariantSpec } from '../../../src/engine/simulation/types.ts';
import { hwIntegrals } from '../../../src/engine/simulation/hullWhiteTerms.ts';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';
import { bsDyn, expectWithinSe, flatRate, FULL, run, spec } from './helpers.ts';

const N = FULL ? 400_000 : 40_000;

function ratesOnly(
  r: number,
  hw: { a: number; sigma: number | number[]; sigmaTimes?: number[] },
): VariantSpec {
  return {
    id: 'hw',
    label: 'hw',
    domestic: 'DOM',
    equities: [],
    rates: { DOM: flatRate('DOM', r, hw) },
    fx: [],
    correlation: { names: [], matrix: [] },
  };
}

describe('Hull–White paths reprice bonds and options on bonds', () => {
  it('E[1/B(T)] = P(0,T) and E[P(t,T)/B(t)] = P(0,T), also with piecewise sigma', async () => {
    // Exactness of ∫φ (Brigo & Mercurio 2006, Sec. 3.3; common practice): the bank account reprices the curve.
    for (const hw of [
      { a: 0.08, sigma: 0.01 },
      { a: 0.03, sigma: [0.008, 0.015], sigmaTimes: [2, 10] },
    ]) {
      const r = await run(
        spec(
          [ratesOnly(0.1, hw)],
          [
            { kind: 'zcb', maturity: 5 },
            { kind: 'zcb', maturity: 5, observe: 1 },
          ],
          { maxStep: 0.25, paths: N },
        ),
      );
      expectWithinSe(r, 0, Math.exp(-0.5), 0.001, `ZCB by bank account, hw=${JSON.stringify(hw)}`);
      expectWithinSe(r, 1, Math.exp(-0.5), 0.001, `ZCB by P(1,5) on the path, hw=${JSON.stringify(hw)}`);
    }
  });

  it('a 1y call on a 5y zero-coupon bond matches the Hull problem (0.439)', async () => {
    // Hull, OFOD, short-rate models chapter, end-of-chapter problem (from memory): a=0.08, σ=0.01, flat 10%,
    // face 100, K=68 → 0.439; re-computed 0.438949559957 (published.md).
    const r = await run(
      spec(
        [ratesOnly(0.1, { a: 0.08, sigma: 0.01 })],
        [{ kind: 'zbo', type: 'call', expiry: 1, maturity: 5, strike: 0.68, notional: 100 }],
        { maxStep: 0.25, paths: N },
      ),
    );
    expectWithinSe(r, 0, 0.438949559957, 0.01, 'HW ZBO call');
    // Second method: the models layer's closed form (Brigo & Mercurio (3.40)).
    const m = makeHullWhite(makeCurve(flatRate('DOM', 0.1).curve), { a: 0.08, sigma: 0.01 });
    expect(100 * m.zeroBondOption({ type: 'call', T: 1, S: 5, strike: 0.68 })).toBeCloseTo(0.438949559957, 3);
  });

  it('a caplet matches the Hull–White closed form', async () => {
    // Worked case of published.md Sec. 3 (constructed there, QuantLib 1.29 = closed form 0.404159032308): a=0.1,
    // σ=0.01, flat 5%, caplet on [1, 2], K=5%, notional 100 (Brigo & Mercurio (3.41)).
    const r = await run(
      spec(
        [ratesOnly(0.05, { a: 0.1, sigma: 0.01 })],
        [{ kind: 'caplet', fixing: 1, payment: 2, strike: 0.05, notional: 100 }],
        { maxStep: 0.25, paths: N },
      ),
    );
    expectWithinSe(r, 0, 0.404159032308, 0.006, 'HW caplet');
  });

  it('under deterministic rates a caplet is worth its intrinsic value on the forward', async () => {
    // Limit σ → 0 (common practice): the forward rate is known, so the caplet is P(0,T2)·N·τ·(F − K)⁺.
    const v: VariantSpec = {
      ...ratesOnly(0.05, { a: 0.1, sigma: 0.01 }),
      rates: { DOM: flatRate('DOM', 0.05) },
    };
    const r = await run(
      spec([v], [{ kind: 'caplet', fixing: 1, payment: 2, strike: 0.04, notional: 100 }], {
        maxStep: 1,
        paths: 1000,
      }),
    );
    const F = Math.exp(0.05) - 1;
    expect(r.sums.mean[0]).toBeCloseTo(100 * Math.exp(-0.1) * (F - 0.04), 10);
  });
});

function quantoVariant(hwRates: boolean): VariantSpec {
  // Haug (1998) quanto inputs: S=100, r_d=8%, r_f=5%, q=4%, σ_S=20%, σ_X=10%, ρ(S,X)=0.3.
  return {
    id: hwRates ? 'q-hw' : 'q',
    label: 'quanto',
    domestic: 'DOM',
    equities: [{ name: 'B', currency: 'ASH', spot: 100, divYield: 0.04, dynamics: bsDyn(0.2) }],
    rates: {
      DOM: flatRate('DOM', 0.08, hwRates ? { a: 0.05, sigma: 0.01 } : undefined),
      ASH: flatRate('ASH', 0.05, hwRates ? { a: 0.1, sigma: 0.008 } : undefined),
    },
    fx: [{ name: 'ASHDOM', foreign: 'ASH', spot: 1.3, vol: 0.1 }],
    correlation: hwRates
      ? {
          names: ['eq:B', 'fx:ASHDOM', 'rate:DOM', 'rate:ASH'],
          matrix: [
            [1, 0.3, 0.1, 0.2],
            [0.3, 1, -0.2, 0.25],
            [0.1, -0.2, 1, 0.5],
            [0.2, 0.25, 0.5, 1],
          ],
        }
      : {
          names: ['eq:B', 'fx:ASHDOM'],
          matrix: [
            [1, 0.3],
            [0.3, 1],
          ],
        },
  };
}

describe('FX and quanto drift', () => {
  it('a quanto forward and a quanto call match Haug (1998)', async () => {
    // Quanto forward F_Q = S0 exp((r_f − q − ρ σ_S σ_X) T) = 100.2002 (published.md, worked from the standard
    // formula); quanto call 5.3280 at fixed FX 1.5 (Haug 1998, pp. 105–106, from memory; QuantLib quantooption.cpp).
    const r = await run(
      spec(
        [quantoVariant(false)],
        [
          { kind: 'quantoForward', equity: 'B', expiry: 0.5 },
          { kind: 'call', equity: 'B', strike: 105, expiry: 0.5 },
        ],
        { maxStep: 0.5, paths: N },
      ),
    );
    expectWithinSe(r, 0, 100.200200133 * Math.exp(-0.04), 0.12, 'quanto forward');
    expectWithinSe(r, 1, 5.32803391922 / 1.5, 0.04, 'quanto call per unit of fixed FX');
    const p = { S: 100, T: 0.5, rDomestic: 0.08, rForeign: 0.05, q: 0.04, volS: 0.2, volFx: 0.1, rho: 0.3 };
    expect(quantoForward(p)).toBeCloseTo(100.2002, 4);
    expect(quantoEuropean({ ...p, type: 'call', K: 105, fixedFx: 1.5 })).toBeCloseTo(5.328, 3);
  });

  it('the quanto drift of a foreign equity is resolved well beyond the Monte Carlo error', async () => {
    // Quanto forward S0 exp((r_f − q − ρ σ_S σ_X) T) by the models layer's closed form (second method); the drift
    // term moves the value by ρ σ_S σ_X T = 18% here, far above 3 SE.
    const v = quantoVariant(false);
    v.equities[0]!.dynamics = bsDyn(0.3);
    v.fx[0]!.vol = 0.2;
    v.correlation = {
      names: ['eq:B', 'fx:ASHDOM'],
      matrix: [
        [1, 0.6],
        [0.6, 1],
      ],
    };
    const r = await run(
      spec([v], [{ kind: 'quantoForward', equity: 'B', expiry: 5 }], { maxStep: 1, paths: N }),
    );
    const exact =
      quantoForward({
        S: 100,
        T: 5,
        rDomestic: 0.08,
        rForeign: 0.05,
        q: 0.04,
        volS: 0.3,
        volFx: 0.2,
        rho: 0.6,
      }) * Math.exp(-0.4);
    expectWithinSe(r, 0, exact, 0.5, 'quanto forward, strong drift');
    expect(3 * columnStats(r.sums).se(0)).toBeLessThan(0.1 * exact * 0.18);
  });

  it('a Heston equity in a foreign currency keeps S·X/B a martingale under QE with its quanto drift', async () => {
    // E[S(T) X(T)/B_d(T)] = S0 X0 e^{−qT} (common practice); with ρ(v,X) = 0 the drift −ρ σ_X √(h ∫v) offsets the
    // covariance of the equity residual with the FX increment exactly, step by step.
    const v = quantoVariant(false);
    v.equities[0]!.dynamics = { kind: 'heston', v0: 0.06, kappa: 1, theta: 0.05, sigma: 0.7, rho: -0.6 };
    v.fx[0]!.vol = 0.2;
    v.correlation = {
      names: ['eq:B', 'fx:ASHDOM'],
      matrix: [
        [1, 0.5],
        [0.5, 1],
      ],
    };
    const r = await run(
      spec([v], [{ kind: 'discountedAsset', equity: 'B', time: 5 }], { maxStep: 0.5, paths: N }),
    );
    expectWithinSe(r, 0, 130 * Math.exp(-0.2), 0.8, 'foreign Heston equity in domestic');
  });

  it('with Hull–White rates in both currencies the FX forward and the converted foreign equity stay martingales', async () => {
    // Under the domestic bank account: E[X(T)/B_d(T)] = X0 P_f(0,T) and E[S(T) X(T)/B_d(T)] = S0 X0 e^{−qT}
    // (common practice; they check the FX drift r_d − r_f and the quanto drifts of the foreign equity and rate).
    const r = await run(
      spec(
        [quantoVariant(true)],
        [
          { kind: 'fxForward', fx: 'ASHDOM', expiry: 5 },
          { kind: 'discountedAsset', equity: 'B', time: 5 },
        ],
        { maxStep: 0.25, paths: N },
      ),
    );
    expectWithinSe(r, 0, 1.3 * Math.exp(-0.25), 0.005, 'FX forward, HW both');
    expectWithinSe(r, 1, 130 * Math.exp(-0.2), 0.5, 'foreign equity in domestic, HW both');
  });

  it('the foreign short rate carries its quanto drift: the FX forward test is sensitive to it', async () => {
    // E[X(T)/B_d(T)] = X0 P_f(0,T) holds only with the drift −ρ(r_f,X) σ_f σ_X in x_f (Brigo & Mercurio 2006,
    // Sec. 2.10 change of numeraire; common practice); without it the value moves by about c·∫_0^T B(s) ds in log.
    const a = 0.05,
      sf = 0.02,
      sx = 0.2,
      rho = 0.5,
      T = 5;
    const v: VariantSpec = {
      id: 'fx',
      label: 'fx',
      domestic: 'DOM',
      equities: [],
      rates: {
        DOM: flatRate('DOM', 0.03, { a: 0.1, sigma: 0.01 }),
        ASH: flatRate('ASH', 0.01, { a, sigma: sf }),
      },
      fx: [{ name: 'ASHDOM', foreign: 'ASH', spot: 2, vol: sx }],
      correlation: {
        names: ['rate:ASH', 'fx:ASHDOM', 'rate:DOM'],
        matrix: [
          [1, rho, 0.3],
          [rho, 1, -0.1],
          [0.3, -0.1, 1],
        ],
      },
    };
    const r = await run(
      spec([v], [{ kind: 'fxForward', fx: 'ASHDOM', expiry: T }], { maxStep: 0.25, paths: N }),
    );
    const exact = 2 * Math.exp(-0.01 * T);
    expectWithinSe(r, 0, exact, 0.01, 'FX forward with foreign quanto drift');
    const effect = exact * rho * sf * sx * hwIntegrals(a, T).intB;
    expect(3 * columnStats(r.sums).se(0), `effect of the drift ${effect}`).toBeLessThan(0.5 * effect);
  });
});
