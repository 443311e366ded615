import { describe, expect, it } from 'vitest';
import {
  calibrateHeston,
  hestonModelPrices,
  PRICER_CHECK_VOL_POINTS,
} from '../../../src/engine/calibration/hestonCalibration.ts';
import { cosCallPricesAdaptive } from '../../../src/engine/calibration/cosPricer.ts';
import {
  h1hwCumulants,
  h1hwExtraVariance,
  h1hwLogChfGrid,
  sqrtVarianceTable,
} from '../../../src/engine/calibration/h1hwCharFn.ts';
import { blackImpliedVol } from '../../../src/engine/calibration/blackFormulas.ts';
import { gridQuotes } from '../../../src/engine/calibration/volGrid.ts';
import { makeCurve, equityForward } from '../../../src/engine/market/index.ts';
import {
  defaultTruncationL,
  hestonCharFn,
  hestonCumulants,
  hestonExponentGrid,
  hestonLewis,
  type HestonParams,
} from '../../../src/engine/models/index.ts';
import { Complex } from '../../../src/engine/math/complex.ts';
import { integrateAdaptive } from '../../../src/engine/math/quadrature.ts';
import type { EquityQuote } from '../../../src/engine/market/types.ts';
import { FO_HESTON, EXPIRIES, MONEYNESS, flatCurveSpec, hestonGrid } from './syntheticMarket.ts';
import { expectClose } from '../../helpers/expectClose.ts';

const curveSpec = flatCurveSpec('DOM', 0.02);
const curve = makeCurve(curveSpec);
// Andersen (2008) QE paper Case I parameters (from memory; published.md §1): heavy tails at long expiries.
const CASE_I: HestonParams = { v0: 0.04, kappa: 0.5, theta: 0.04, sigma: 1, rho: -0.9 };
const LONG = [0.5, 1, 2, 5, 10];

/** A vol grid priced by the models layer's Lewis integral (a second method, independent of the COS slices). */
function lewisGrid(p: HestonParams, expiries: number[]): EquityQuote {
  const base: EquityQuote = { currency: 'DOM', spot: 100, divYield: 0.01, vols: { expiries: [], vols: [] } };
  const vols = expiries.map((T) => {
    const F = equityForward(base, curve, T);
    const df = curve.df(T);
    return MONEYNESS.map((m) => {
      const K = m * 100;
      const call = df * hestonLewis({ S: F, T, r: 0, q: 0, params: p, type: 'call', K });
      return blackImpliedVol({ forward: F, strike: K, expiry: T, df, isCall: true, price: call });
    });
  });
  return { ...base, vols: { expiries, moneyness: MONEYNESS, vols } };
}

describe('COS slices with a range from the model and terms from the characteristic function', () => {
  it('price Andersen (2008) Case I (K=100) to 1e-7 on the cumulant range (published.md re-computation 13.084670137)', () => {
    const { c1, c2, c4 } = hestonCumulants(CASE_I, 10);
    const half = defaultTruncationL(c2, c4, 1e-10) * Math.sqrt(c2 + Math.sqrt(Math.abs(c4)));
    const r = cosCallPricesAdaptive({
      logChfGrid: (u, re, im) => hestonExponentGrid(CASE_I, 10, u, re, im),
      forward: 100,
      df: 1,
      strikes: [100],
      lo: c1 - half,
      width: 2 * half,
      tol: 1e-9,
    });
    expect(r.converged).toBe(true);
    expectClose('Case I', r.prices[0]!, 13.084670137, 1e-7);
  });

  it('price the exact Heston–Hull–White values of published.md §2 (ρ(S,r) = 0) within 2e-5 under H1-HW', () => {
    // published.md §2: QuantLib 1.29 AnalyticHestonHullWhiteEngine, Grzelak thesis case (via QuantLib test-suite).
    const exact = [68.994785, 41.762904, 30.62615, 21.877724, 8.562999];
    const p: HestonParams = { v0: 0.05, kappa: 0.3, theta: 0.05, sigma: 0.6, rho: -0.3 };
    const rates = { hw: { a: 0.01, sigma: 0.01 }, rhoSR: 0 };
    const df = Math.exp(-0.2);
    const { c1, c2, c4 } = h1hwCumulants(p, 10, rates);
    const half = defaultTruncationL(c2, c4, 1e-10) * Math.sqrt(c2 + Math.sqrt(Math.abs(c4)));
    const r = cosCallPricesAdaptive({
      logChfGrid: h1hwLogChfGrid(p, 10, rates),
      forward: 100 / df,
      df,
      strikes: [40, 80, 100, 120, 180],
      lo: c1 - half,
      width: 2 * half,
      tol: 1e-9,
    });
    r.prices.forEach((g, i) => expectClose(`HHW K index ${i}`, g, exact[i]!, 2e-5));
  });
});

describe('pricer check of the Heston calibration', () => {
  it('the market-range slices misprice the Case I grid by more than 1e-4 × F at T = 10 (what the check is for)', () => {
    const quotes = gridQuotes(lewisGrid(CASE_I, [10]), curve, 'equities.EQ');
    const fast = hestonModelPrices(CASE_I, quotes);
    const worst = Math.max(...quotes.map((q, i) => Math.abs(fast[i]! - q.price) / (q.df * q.forward)));
    expect(worst, `worst |fast − Lewis|/(df·F) = ${worst}`).toBeGreaterThan(1e-4);
  });

  it('refits a heavy-tailed grid on the model range, says so, and then reprices it like the Lewis integral', () => {
    const eq = lewisGrid(CASE_I, LONG);
    const start = { v0: 0.035, kappa: 0.7, theta: 0.05, sigma: 0.8, rho: -0.8 };
    const r = calibrateHeston({ name: 'EQ', equity: eq, curve, starts: [start] });
    expect(r.pricer.residualPricer).toBe('model-range');
    expect(r.pricer.refitted).toBe(true);
    expect(r.pricer.disagreementVolPoints).toBeGreaterThan(PRICER_CHECK_VOL_POINTS);
    expect(r.pricer.finalDisagreementVolPoints).toBeLessThanOrEqual(PRICER_CHECK_VOL_POINTS);
    expect(r.warnings.map((w) => w.code)).not.toContain('W_PRICER_RANGE');
    // The reported rows now reprice the quotes as the Lewis integral does (second method), well inside 1e-6 × F.
    const quotes = gridQuotes(eq, curve, 'equities.EQ');
    r.rows.forEach((row, i) => {
      const q = quotes[i]!;
      const lewis =
        q.df *
        hestonLewis({
          S: q.forward,
          T: q.expiry,
          r: 0,
          q: 0,
          params: r.params,
          type: q.isCall ? 'call' : 'put',
          K: q.strike,
        });
      expectClose(`row ${i} T=${q.expiry} K=${q.strike}`, row.modelPrice, lewis, 1e-6 * q.df * q.forward);
    });
    // Noiseless quotes of known parameters: the refit recovers them.
    for (const n of ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const)
      expectClose(`Case I ${n}`, r.params[n], CASE_I[n], 2e-3);
    expect(r.rmseVolPoints).toBeLessThan(0.01);
  });

  it('leaves an ordinary fit on the market-range slices (Fang–Oosterlee grid): not triggered, says so', () => {
    const grid = hestonGrid({
      ccy: 'DOM',
      spot: 100,
      divYield: 0.01,
      curve: curveSpec,
      heston: FO_HESTON,
      expiries: EXPIRIES,
      moneyness: MONEYNESS,
    });
    const r = calibrateHeston({ name: 'EQ', equity: grid, curve, starts: [FO_HESTON] });
    expect(r.pricer.residualPricer).toBe('market-range');
    expect(r.pricer.refitted).toBe(false);
    expect(r.pricer.disagreementVolPoints).toBeLessThanOrEqual(PRICER_CHECK_VOL_POINTS);
  });

  it('guards the H1-HW variant too: refits on the model range and then matches a Lewis integral of the H1-HW function', () => {
    const rates = { hw: { a: 0.05, sigma: 0.01 }, rhoSR: 0.2 };
    const eq = lewisGrid(CASE_I, LONG);
    const r = calibrateHeston({ name: 'EQ', equity: eq, curve, rates, starts: [CASE_I] });
    expect(r.pricer.residualPricer).toBe('model-range');
    expect(r.pricer.refitted).toBe(true);
    expect(r.pricer.finalDisagreementVolPoints).toBeLessThanOrEqual(PRICER_CHECK_VOL_POINTS);
    // Second method: the Lewis (2001) call formula on Im u = −½ with φ_H1(z) = φ_Heston(z)·exp(−½(z² + iz)Σ²(T))
    // (the Gaussian factor of h1hwCharFn.ts continued to complex z), integrated adaptively.
    const quotes = gridQuotes(eq, curve, 'equities.EQ');
    for (const i of [0, 20, 24, 31, 34]) {
      const q = quotes[i]!;
      const T = q.expiry;
      // Σ²(T) with the calibration's own E√v(t) table (its interpolation is part of the model being fitted).
      const extra = h1hwExtraVariance(r.params, T, { ...rates, sqrtV: sqrtVarianceTable(r.params, 10) });
      const k = Math.log(q.forward / q.strike);
      const integrand = (u: number): number => {
        const z = Complex.of(u, -0.5);
        const gauss = z
          .mul(z)
          .add(Complex.I.mul(z))
          .scale(-0.5 * extra)
          .exp();
        const phi = hestonCharFn(r.params, T, z).mul(gauss);
        return Complex.fromPolar(1, u * k).mul(phi).re / (u * u + 0.25);
      };
      const integral = integrateAdaptive(integrand, 0, 400, {
        absTol: 1e-12,
        relTol: 1e-13,
        maxSegments: 20000,
      });
      const call = q.df * (q.forward - (Math.sqrt(q.forward * q.strike) / Math.PI) * integral);
      const ref = q.isCall ? call : call - q.df * (q.forward - q.strike);
      expectClose(`H1-HW row ${i} T=${T} K=${q.strike}`, r.rows[i]!.modelPrice, ref, 1e-6 * q.df * q.forward);
    }
  });
});
