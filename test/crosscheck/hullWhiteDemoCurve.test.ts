/**
 * Hull–White across layers on a sloped curve (the demo DOM curve, an input only) with a piecewise σ: the path
 * generator (simulation) against the closed forms (models/hullWhite.ts) and against identities that hold for any
 * short-rate model fitted to the curve.
 */
import { describe, it, expect } from 'vitest';
import { makeCurve } from '../../src/engine/market/curve.ts';
import { makeHullWhite } from '../../src/engine/models/hullWhite.ts';
import type { HullWhiteParams, VariantSpec } from '../../src/engine/simulation/types.ts';
import { demoMarket, expectClose, expectWithinSe, FULL, MeanSe, simulateChunks } from './helpers.ts';

const market = demoMarket();
const curveSpec = market.curves.DOM!;
const curve = makeCurve(curveSpec);
const hw: HullWhiteParams = { a: 0.03, sigma: [0.006, 0.011, 0.008], sigmaTimes: [2, 5, 30] };
const model = makeHullWhite(curve, hw);

const variant: VariantSpec = {
  id: 'hw',
  label: 'Hull–White DOM',
  domestic: 'DOM',
  equities: [],
  rates: { DOM: { curve: curveSpec, hw } },
  fx: [],
  correlation: { names: ['rate:DOM'], matrix: [[1]] },
};

/** σ(u) with the simulation contract's convention: σ_i on (t_{i−1}, t_i], flat after the last piece. */
function sigmaAt(u: number): number {
  const s = hw.sigma as number[];
  const ends = hw.sigmaTimes!;
  for (let i = 0; i < s.length - 1; i++) if (u <= ends[i]!) return s[i]!;
  return s[s.length - 1]!;
}

/**
 * ψ(t) = ∫_0^t σ(u)² e^{−a(t−u)} B(t−u) du by composite Simpson on each σ piece (Brigo & Mercurio 2006, Sec. 3.3,
 * the convexity part of φ; for constant σ it is σ²/(2a²)(1 − e^{−at})², BM eq. 3.36 (equation number from memory)).
 */
function psiQuadrature(t: number): number {
  const a = hw.a;
  const f = (u: number) => {
    const tau = t - u;
    return sigmaAt(u) ** 2 * Math.exp(-a * tau) * (-Math.expm1(-a * tau) / a);
  };
  const cuts = [0, ...hw.sigmaTimes!.filter((x) => x < t), t];
  let s = 0;
  for (let i = 0; i + 1 < cuts.length; i++) {
    const lo = cuts[i]!;
    const hi = cuts[i + 1]!;
    const n = 200;
    const h = (hi - lo) / n;
    let acc = f(lo + 1e-12) + f(hi - 1e-12);
    for (let j = 1; j < n; j++) acc += (j % 2 ? 4 : 2) * f(lo + j * h);
    s += (acc * h) / 3;
  }
  return s;
}

/** f(0,t) = −∂_t ln P(0,t), by a central difference of the curve's discount factors (definition; common practice). */
const fwdByDifference = (t: number) => {
  const e = 1e-5;
  return -(Math.log(curve.df(t + e)) - Math.log(curve.df(t - e))) / (2 * e);
};

describe('Hull–White on the sloped demo curve with piecewise σ: simulation against closed forms and identities', () => {
  const times = [1, 3, 4.5, 7];
  const nPaths = FULL ? 400_000 : 100_000;
  const est = {
    df: times.map(() => new MeanSe()),
    rD: times.map(() => new MeanSe()),
    r: times.map(() => new MeanSe()),
    r2: times.map(() => new MeanSe()),
    bondLater: times.map(() => new MeanSe()),
  };
  const bondT = 10;
  const strikesBp = [-100, 0, 100];
  const caplets = strikesBp.map(() => new MeanSe());
  const capFix = 3;
  const capPay = 4;
  let maxPathwiseBondGap = 0;
  let maxPhiGap = 0;
  let ran = false;

  function simulate() {
    if (ran) return;
    ran = true;
    simulateChunks({
      variant,
      eventTimes: [...times, capPay],
      maxStep: 0.5,
      nPaths,
      seed: 'crosscheck-hw-demo',
      visit: (b, grid) => {
        const n = b.nPaths;
        const out = new Float64Array(n);
        times.forEach((t, i) => {
          const k = grid.indexOf(t);
          const o = k * n;
          const r = b.shortRate.DOM!;
          b.bond('DOM', k, bondT, out);
          // The generator's φ(t_k) is the mean of r(t_k) given x = 0; the model's φ must be the same function.
          for (let p = 0; p < n; p++) {
            const D = b.discount[o + p]!;
            est.df[i]!.add(D);
            est.rD[i]!.add(r[o + p]! * D);
            est.r[i]!.add(r[o + p]!);
            est.r2[i]!.add((r[o + p]! - model.phi(t)) ** 2);
            est.bondLater[i]!.add(D * out[p]!);
          }
          // Pathwise: the generator's bond P(t,T) equals the closed form's P(t,T | x) with x = r − φ(t)
          // (Brigo & Mercurio 2006, eq. 3.39 written for x; two implementations of one formula).
          for (let p = 0; p < Math.min(n, 64); p++) {
            const x = r[o + p]! - model.phi(t);
            const want = model.bond(t, bondT, x);
            maxPathwiseBondGap = Math.max(maxPathwiseBondGap, Math.abs(out[p]! - want) / want);
          }
        });
        const kf = grid.indexOf(capFix);
        b.bond('DOM', kf, capPay, out);
        const o = kf * n;
        const F = curve.fwd(capFix, capPay);
        strikesBp.forEach((bp, j) => {
          const K = F + bp * 1e-4;
          for (let p = 0; p < n; p++) {
            const P = out[p]!;
            const L = (1 / P - 1) / (capPay - capFix);
            // Paid at T2, valued at T1 as P(T1,T2)·τ(L − K)⁺ (tower property; Brigo & Mercurio 2006, Sec. 1.4).
            caplets[j]!.add(L > K ? (capPay - capFix) * (L - K) * P * b.discount[o + p]! : 0);
          }
        });
      },
    });
    for (const t of times)
      maxPhiGap = Math.max(maxPhiGap, Math.abs(model.phi(t) - fwdByDifference(t) - psiQuadrature(t)));
  }

  it('E[1/B(t)] = P(0,t) and E[P(t,T)/B(t)] = P(0,T) (absence of arbitrage: bonds are martingales under the bank account; common practice)', () => {
    simulate();
    times.forEach((t, i) => {
      expectWithinSe({
        label: `E[1/B(${t})]`,
        computed: est.df[i]!.value,
        se: est.df[i]!.se,
        expected: curve.df(t),
        seCap: 2e-3,
      });
      expectWithinSe({
        label: `E[P(${t},${bondT})/B(${t})]`,
        computed: est.bondLater[i]!.value,
        se: est.bondLater[i]!.se,
        expected: curve.df(bondT),
        seCap: 2e-3,
      });
    });
  });

  it('E[r(t)/B(t)] = f(0,t)·P(0,t), since ∂_t P(0,t) = −E[r(t) e^{−∫r}] (differentiating the curve fit; common practice)', () => {
    simulate();
    times.forEach((t, i) => {
      const want = fwdByDifference(t) * curve.df(t);
      expectWithinSe({
        label: `E[r(${t}) D(${t})]`,
        computed: est.rD[i]!.value,
        se: est.rD[i]!.se,
        expected: want,
        seCap: 2e-4,
      });
    });
  });

  it('E[r(t)] = f(0,t) + ψ(t) and Var r(t) = y(t): the shift φ against the forwards of the sloped curve (Brigo & Mercurio 2006, Sec. 3.3)', () => {
    simulate();
    expectClose('φ(t) − f(0,t) − ψ(t) (closed form vs finite difference and quadrature)', maxPhiGap, 0, 2e-7);
    times.forEach((t, i) => {
      const want = fwdByDifference(t) + psiQuadrature(t);
      expectWithinSe({
        label: `E[r(${t})]`,
        computed: est.r[i]!.value,
        se: est.r[i]!.se,
        expected: want,
        seCap: 1e-4,
      });
      expectWithinSe({
        label: `E[(r(${t}) − φ(${t}))²] vs y(t)`,
        computed: est.r2[i]!.value,
        se: est.r2[i]!.se,
        expected: model.varX(t),
        seCap: 0.05 * model.varX(t),
      });
    });
  });

  it('the generator bond P(t,T) equals the closed-form bond of the same state x path by path', () => {
    simulate();
    expectClose('max relative gap of P(t,10) over paths and times', maxPathwiseBondGap, 0, 1e-12);
  });

  it('a 3y×1y caplet at ATM − 100 bp, ATM and ATM + 100 bp matches the closed form (Brigo & Mercurio 2006, eq. 3.41)', () => {
    simulate();
    const F = curve.fwd(capFix, capPay);
    strikesBp.forEach((bp, j) => {
      const K = F + bp * 1e-4;
      const want = model.caplet({ type: 'cap', T1: capFix, T2: capPay, strike: K });
      expectWithinSe({
        label: `caplet K = F ${bp >= 0 ? '+' : '−'} ${Math.abs(bp)} bp`,
        computed: caplets[j]!.value,
        se: caplets[j]!.se,
        expected: want,
        seCap: 1e-4,
        inputs: { F, K, hw },
      });
    });
    expect(caplets[0]!.value).toBeGreaterThan(caplets[2]!.value);
  });
});
