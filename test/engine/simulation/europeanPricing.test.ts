import { describe, it, expect } from 'vitest';
import { bsPrice } from '../../../src/engine/models/blackScholes.ts';
import { hestonLewis } from '../../../src/engine/models/hestonLewis.ts';
import { bsHullWhite } from '../../../src/engine/models/bsHullWhite.ts';
import { makeCurve } from '../../../src/engine/market/curve.ts';
import { columnStats } from '../../../src/engine/simulation/momentSums.ts';
import { bsDyn, expectWithinSe, flatRate, FULL, oneEquity, run, spec } from './helpers.ts';

const N = FULL ? 400_000 : 40_000;
const NH = FULL ? 1_000_000 : 100_000;

describe('European calls by Monte Carlo agree with closed forms within 3 standard errors', () => {
  it('Black–Scholes exact log steps price the Hull call', async () => {
    // Hull, OFOD, BSM chapter worked example (8th ed. Example 15.6; from memory): S=42, K=40, T=0.5, r=10%, vol=20%
    // → 4.76; re-computed 4.75942239287 (published.md).
    const r = await run(
      spec(
        [oneEquity({ spot: 42, r: 0.1, dynamics: bsDyn(0.2) })],
        [{ kind: 'call', equity: 'A', strike: 40, expiry: 0.5 }],
        { maxStep: 0.5, paths: N },
      ),
    );
    expectWithinSe(r, 0, 4.75942239287, 0.03, 'BS call');
    // Second method in the project: the models layer's closed form.
    expect(bsPrice({ type: 'call', S: 42, K: 40, T: 0.5, r: 0.1, q: 0, vol: 0.2 })).toBeCloseTo(
      4.75942239287,
      9,
    );
  });

  it('at zero vol a call is worth its discounted intrinsic value on the forward, path by path', async () => {
    // Limit σ = 0 (common practice): S(T) = S0 e^{(r − q)T} on every path.
    const r = await run(
      spec(
        [oneEquity({ spot: 100, r: 0.05, q: 0.01, dynamics: bsDyn(0) })],
        [{ kind: 'call', equity: 'A', strike: 90, expiry: 2 }],
        { maxStep: 0.5, paths: 1000 },
      ),
    );
    const exact = Math.exp(-0.1) * (100 * Math.exp(0.08) - 90);
    expect(r.sums.mean[0]!).toBeCloseTo(exact, 10);
    expect(r.sums.comoment[0]!).toBeLessThan(1e-18);
  });

  it('Black–Scholes with a vol term structure prices like the flat vol of the same total variance', async () => {
    // Limit: exact log steps depend only on ∫σ² (common practice); vols 0.1 on (0,1], 0.3 after, T = 2.
    const dyn = { kind: 'bs' as const, volTimes: [1, 2], vols: [0.1, 0.3] };
    const r = await run(
      spec(
        [oneEquity({ spot: 100, r: 0.03, q: 0.01, dynamics: dyn })],
        [{ kind: 'put', equity: 'A', strike: 100, expiry: 2 }],
        { maxStep: 2, paths: N },
      ),
    );
    const vol = Math.sqrt((0.01 + 0.09) / 2);
    expectWithinSe(
      r,
      0,
      bsPrice({ type: 'put', S: 100, K: 100, T: 2, r: 0.03, q: 0.01, vol }),
      0.08,
      'BS term-structure put',
    );
  });

  it('Heston QE and full-truncation Euler match the Lewis reference call (K = 100)', async () => {
    // Lewis high-precision Heston prices (from memory; matches QuantLib test-suite, published.md): S=100, K=100, T=1,
    // r=1%, q=2%, v0=0.04, κ=4, θ=0.25, σ=1, ρ=−0.5 → 16.070154917028834.
    const dyn = { kind: 'heston' as const, v0: 0.04, kappa: 4, theta: 0.25, sigma: 1, rho: -0.5 };
    const qe = oneEquity({ id: 'qe', spot: 100, r: 0.01, q: 0.02, dynamics: dyn });
    const eu = oneEquity({ id: 'eu', spot: 100, r: 0.01, q: 0.02, dynamics: dyn, scheme: 'euler' });
    const r1 = await run(
      spec([qe], [{ kind: 'call', equity: 'A', strike: 100, expiry: 1 }], { maxStep: 0.1, paths: N }),
    );
    expectWithinSe(r1, 0, 16.070154917028834, 0.2, 'Heston QE, dt=0.1');
    const r2 = await run(
      spec([eu], [{ kind: 'call', equity: 'A', strike: 100, expiry: 1 }], { maxStep: 1 / 64, paths: N }),
    );
    // Full truncation has an O(dt) bias; 0.1 allowed at dt = 1/64 (Lord, Koekkoek & van Dijk 2010 report FT biases of
    // this order at comparable steps; from memory).
    expectWithinSe(r2, 0, 16.070154917028834, 0.2, 'Heston Euler-FT, dt=1/64', 0.1);
    // Second method: the project's Lewis integral.
    expect(hestonLewis({ type: 'call', S: 100, K: 100, T: 1, r: 0.01, q: 0.02, params: dyn })).toBeCloseTo(
      16.070154917,
      7,
    );
  });

  it('Heston QE keeps a small bias on Andersen Case I at coarse steps (dt = 1/4)', async () => {
    // Andersen (2008), Case I: S=100, K=100, T=10, v0=0.04, κ=0.5, θ=0.04, σ=1, ρ=−0.9; exact 13.084670137
    // (published.md, re-computed). Andersen's Sec. 6 bias tables for Case I (K = 100) show QE-M biases of a few
    // hundredths at dt = 1/4 (from memory, low confidence; the table number was not checked); allowance 0.1 beyond 3 SE.
    const dyn = { kind: 'heston' as const, v0: 0.04, kappa: 0.5, theta: 0.04, sigma: 1, rho: -0.9 };
    const r = await run(
      spec(
        [oneEquity({ spot: 100, r: 0, dynamics: dyn })],
        [{ kind: 'call', equity: 'A', strike: 100, expiry: 10 }],
        { maxStep: 0.25, paths: N },
      ),
    );
    expectWithinSe(r, 0, 13.084670137, 0.1, 'Andersen Case I, QE dt=1/4', 0.1);
    expect(r.warnings.map((w) => w.code)).toContain('W_FELLER');
  });

  it('Heston QE keeps a small bias on Andersen Case II (dt = 1/4), where full-truncation Euler is far off', async () => {
    // Andersen (2008), Case II: S=100, K=100, T=15, v0=0.04, κ=0.3, θ=0.04, σ=0.9, ρ=−0.5; exact 16.6492229204
    // (published.md: published value from memory, low confidence; re-computed by QuantLib and a Lewis integral).
    // Andersen's Sec. 6 comparisons show the Euler biases an order of magnitude above QE at these steps (from memory).
    const dyn = { kind: 'heston' as const, v0: 0.04, kappa: 0.3, theta: 0.04, sigma: 0.9, rho: -0.5 };
    const qe = oneEquity({ id: 'qe', spot: 100, r: 0, dynamics: dyn });
    const eu = oneEquity({ id: 'eu', spot: 100, r: 0, dynamics: dyn, scheme: 'euler' });
    const r = await run(
      spec([qe, eu], [{ kind: 'call', equity: 'A', strike: 100, expiry: 15 }], { maxStep: 0.25, paths: N }),
    );
    expectWithinSe(r, 0, 16.6492229204, 0.3, 'Andersen Case II, QE dt=1/4', 0.1);
    const biasQe = Math.abs(r.sums.mean[0]! - 16.6492229204);
    const biasEu = Math.abs(r.sums.mean[1]! - 16.6492229204);
    const seDiff = columnStats(r.sums).seOfDifference(0, 1);
    expect(
      biasEu - biasQe,
      `QE bias ${biasQe}, Euler bias ${biasEu}, SE of difference ${seDiff}`,
    ).toBeGreaterThan(3 * seDiff);
  });

  it('Black–Scholes–Hull–White with equity–rate correlation matches the Gaussian-rate closed form', async () => {
    // Closed form: Rabinovitch (1989) / Brigo & Mercurio (2006) Ch. 13, via the models layer (second method).
    const hw = { a: 0.05, sigma: 0.012 };
    const v = oneEquity({ spot: 100, r: 0.03, q: 0.01, dynamics: bsDyn(0.2), hw, rhoSr: 0.4 });
    const r = await run(
      spec([v], [{ kind: 'call', equity: 'A', strike: 110, expiry: 5 }], { maxStep: 0.5, paths: NH }),
    );
    const exact = bsHullWhite({
      type: 'call',
      S: 100,
      K: 110,
      T: 5,
      q: 0.01,
      curve: makeCurve(flatRate('DOM', 0.03).curve),
      vol: 0.2,
      hw,
      rho: 0.4,
    }).price;
    expectWithinSe(r, 0, exact, 0.12, 'BS-HW call, rho(S,r)=0.4');
  });

  it('Heston–Hull–White with rho(S,r) = 0 matches the exact independent-rates price', async () => {
    // Grzelak thesis case via QuantLib test-suite (published.md Sec. 2, 'Validation at rho_sr = 0', sigma_v = 0.6):
    // AnalyticHestonHullWhiteEngine (exact for independent rates) 30.626150 at K = 100 (a QuantLib value, not a
    // published one); an independent MC there gives 30.6373 ± 0.0193.
    const dyn = { kind: 'heston' as const, v0: 0.05, kappa: 0.3, theta: 0.05, sigma: 0.6, rho: -0.3 };
    const v = oneEquity({ spot: 100, r: 0.02, dynamics: dyn, hw: { a: 0.01, sigma: 0.01 }, rhoSr: 0 });
    const r = await run(
      spec([v], [{ kind: 'call', equity: 'A', strike: 100, expiry: 10 }], { maxStep: 0.25, paths: NH }),
    );
    expectWithinSe(r, 0, 30.62615, 0.22, 'HHW rho_sr=0, K=100');
  });

  it('Heston–Hull–White with rho(S,r) ≠ 0 tends to Black–Scholes–Hull–White as the vol of variance vanishes', async () => {
    // Limit: σ_v → 0 with v0 = θ = 0.04 makes the variance constant, so HHW → BS–HW with vol 0.2 (common practice).
    const hw = { a: 0.05, sigma: 0.012 };
    const dyn = { kind: 'heston' as const, v0: 0.04, kappa: 1, theta: 0.04, sigma: 1e-4, rho: -0.5 };
    const v = oneEquity({ spot: 100, r: 0.03, dynamics: dyn, hw, rhoSr: 0.5 });
    const r = await run(
      spec([v], [{ kind: 'call', equity: 'A', strike: 100, expiry: 5 }], { maxStep: 0.5, paths: NH }),
    );
    const exact = bsHullWhite({
      type: 'call',
      S: 100,
      K: 100,
      T: 5,
      q: 0,
      curve: makeCurve(flatRate('DOM', 0.03).curve),
      vol: 0.2,
      hw,
      rho: 0.5,
    }).price;
    expectWithinSe(r, 0, exact, 0.14, 'HHW sigma_v→0 vs BS-HW, rho(S,r)=0.5');
  });

  it('the labelled Euler scheme accepts a variance–rate correlation and keeps S(T)/B(T) a martingale', async () => {
    // Martingale test (common practice): full truncation's log step has E[exp(−½v⁺h + √(v⁺h) Z)] = 1 exactly.
    const dyn = { kind: 'heston' as const, v0: 0.05, kappa: 1, theta: 0.05, sigma: 0.5, rho: -0.4 };
    const v = oneEquity({
      spot: 100,
      r: 0.02,
      dynamics: dyn,
      hw: { a: 0.05, sigma: 0.01 },
      rhoSr: 0.3,
      scheme: 'euler',
    });
    v.correlation = {
      names: ['eq:A', 'var:A', 'rate:DOM'],
      matrix: [
        [1, -0.4, 0.3],
        [-0.4, 1, 0.2],
        [0.3, 0.2, 1],
      ],
    };
    const r = await run(
      spec([v], [{ kind: 'discountedAsset', equity: 'A', time: 5 }], { maxStep: 0.25, paths: N }),
    );
    expectWithinSe(r, 0, 100, 0.6, 'HHW Euler martingale with rho(v,r)=0.2');
  });

  it('Heston–Hull–White QE with rho(S,r) = 0.6 keeps S(T)/B(T) a martingale at one-year steps', async () => {
    // Martingale test E[S(T)/B(T)] = S0 e^{−qT} (common practice), Grzelak case parameters with rho_sr = 0.6, q = 1%.
    const dyn = { kind: 'heston' as const, v0: 0.05, kappa: 0.3, theta: 0.05, sigma: 0.6, rho: -0.3 };
    const v = oneEquity({
      spot: 100,
      q: 0.01,
      r: 0.02,
      dynamics: dyn,
      hw: { a: 0.01, sigma: 0.01 },
      rhoSr: 0.6,
    });
    const r = await run(
      spec([v], [{ kind: 'discountedAsset', equity: 'A', time: 10 }], { maxStep: 1, paths: N }),
    );
    expectWithinSe(r, 0, 100 * Math.exp(-0.1), 0.5, 'HHW martingale, dt=1');
  });
});
