import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import { evaluateDetailed } from '../../../src/engine/deal/dealEvaluator.ts';
import type { DealInput } from '../../../src/engine/deal/types.ts';
import { dealExerciseSource } from '../../../src/engine/exercise/sources/dealExerciseSource.ts';
import { hullWhiteTreeSwaption } from '../../../src/engine/models/hullWhiteTree.ts';
import { flatCurve } from '../../../src/engine/market/curve.ts';
import {
  compareExerciseResults,
  exercisePayoffFactoryUrl,
  exerciseSeeds,
  makeExercisePathEvaluator,
  priceDealExercise,
  priceExerciseRight,
} from '../../../src/engine/exercise/index.ts';
import type { ExercisePolicy } from '../../../src/engine/exercise/index.ts';
import type { VariantSpec } from '../../../src/engine/simulation/types.ts';
import { batchSeed } from '../../../src/engine/random/index.ts';
import { inProcessExecutor, resultStats, runSimulation } from '../../../src/engine/simulation/index.ts';

const full = process.env.FT_PROFILE === 'full';

function flat(rate: number) {
  return { currency: 'DOM', times: [1, 30], zeroRates: [rate, rate] };
}

/** Black–Scholes with a flat deterministic curve (parameters from the cited test cases, not invented market data). */
function bsVariant(spot: number, vol: number, rate: number): VariantSpec {
  return {
    id: 'bs',
    label: 'Black–Scholes, deterministic rates',
    domestic: 'DOM',
    equities: [
      {
        name: 'ALDR',
        currency: 'DOM',
        spot,
        divYield: 0,
        dynamics: { kind: 'bs', volTimes: [30], vols: [vol] },
      },
    ],
    rates: { DOM: { curve: flat(rate) } },
    fx: [],
    correlation: { names: ['eq:ALDR'], matrix: [[1]] },
  };
}

/** Hull–White rates only (an equity is present because a variant needs one; the deals below do not read it). */
function hwVariant(a: number, sigma: number, rate: number): VariantSpec {
  return {
    ...bsVariant(100, 0.2, rate),
    id: 'hw',
    label: 'Hull–White rates',
    rates: { DOM: { curve: flat(rate), hw: { a, sigma } } },
    correlation: {
      names: ['eq:ALDR', 'rate:DOM'],
      matrix: [
        [1, 0],
        [0, 1],
      ],
    },
  };
}

const exDates = Array.from({ length: 50 }, (_, k) => (k + 1) / 50);

const bermudanPut: DealInput = {
  format: 'factor-triage/deal@1',
  name: 'Bermudan put written in the deal language',
  notional: 1,
  currency: 'DOM',
  underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
  parameters: { K: 40 },
  schedules: { ex: { dates: exDates }, end: { dates: [1] } },
  events: [{ label: 'nothing at expiry', on: 'end', pay: { amount: '0' } }],
  exercise: [{ label: 'holder put', on: 'ex', by: 'holder', amount: 'max(K - ALDR, 0)' }],
};

/** Zero-coupon bond, face 100 at 5y, callable by the issuer at 68 after 1y. */
const callableZero = (callPrice: number): DealInput => ({
  format: 'factor-triage/deal@1',
  name: 'issuer-callable zero-coupon bond',
  notional: 1,
  currency: 'DOM',
  underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
  rates: ['DOM'],
  parameters: { face: 100, callPrice },
  schedules: { call: { dates: [1] }, end: { dates: [5] } },
  events: [{ label: 'redemption', on: 'end', pay: { amount: 'face' } }],
  exercise: [{ label: 'issuer call', on: 'call', by: 'issuer', amount: 'callPrice' }],
});

describe('early exercise of deals written in the deal language', () => {
  it('a Bermudan put in the deal language matches Longstaff & Schwartz (2001) Table 1 (S=36, σ=0.2, T=1)', () => {
    // Longstaff & Schwartz (2001), RFS 14(1), Table 1: LSM 4.472 (s.e. 0.010), FD American 4.478 (from memory).
    const src = dealExerciseSource({
      compiled: compileDeal(bermudanPut),
      variant: bsVariant(36, 0.2, 0.06),
      maxStep: 0.02,
    });
    expect(src.right.stateNames).toContain('eq:ALDR');
    const r = priceExerciseRight(src, {
      seed: 'deal-put',
      degree: 3,
      regressionPaths: full ? 100_000 : 20_000,
      pricingPaths: full ? 200_000 : 40_000,
    });
    const { value, se } = r.estimate.primal;
    const tol = 3 * Math.sqrt(se * se + 0.01 * 0.01);
    expect(se).toBeLessThan(0.02);
    expect(Math.abs(value - 4.472), `deal-language LSM ${value} ± ${se}, table 4.472 ± 0.010`).toBeLessThan(
      tol,
    );
  });

  it('an issuer-callable zero bond under Hull–White is the bond minus the Hull bond call (0.43895), both bounds within 3 SE', () => {
    // Hull, OFOD, short-rate chapter problem via /work/shared/reference/published.md (from memory; QuantLib
    // 0.438949559957 and Brigo & Mercurio (3.40) agree): 1y call on a 5y zero, face 100, K = 68, a = 0.08,
    // σ = 0.01, flat 10 %. The issuer's call right is exactly that bond call held against the holder.
    const exact = 100 * Math.exp(-0.5) - 0.438949559957;
    const src = dealExerciseSource({
      compiled: compileDeal(callableZero(68)),
      variant: hwVariant(0.08, 0.01, 0.1),
      maxStep: 0.25,
    });
    const r = priceExerciseRight(src, {
      seed: 'callable-zero',
      regressionPaths: full ? 50_000 : 10_000,
      pricingPaths: full ? 200_000 : 40_000,
      dual: { outerPaths: full ? 400 : 100, innerPaths: full ? 400 : 100 },
    });
    const { value, se } = r.estimate.primal;
    const d = r.estimate.dual!;
    const info = `LSM ${value} ± ${se}; dual ${d.value} ± ${d.se}; exact ${exact}`;
    expect(se, info).toBeLessThan(0.1);
    // Issuer right: the policy estimate is an upper bound, the dual a lower bound.
    expect(value, info).toBeGreaterThan(exact - 3 * se);
    expect(Math.abs(value - exact), info).toBeLessThan(3 * se);
    expect(d.value, info).toBeLessThan(exact + 3 * d.se);
    expect(r.estimate.biasNote).toMatch(/biased high/);
  });

  it('a call the issuer would never use leaves exactly the non-callable value on the same paths', () => {
    // common practice: a right that is never exercised changes nothing.
    const compiled = compileDeal(callableZero(1e9));
    const variant = hwVariant(0.08, 0.01, 0.1);
    const src = dealExerciseSource({ compiled, variant, maxStep: 0.25 });
    const r = priceExerciseRight(src, {
      seed: 'never',
      regressionPaths: 2000,
      pricingPaths: 3000,
      batchSize: 3000,
    });
    expect(r.estimate.neverExercised).toBe(1);
    // Same pricing paths through the deal evaluator alone (exercise ignored).
    const batch = src.paths(3000, exerciseSeeds.pricing('never', 0));
    const total = evaluateDetailed(compiled, batch).total;
    const mean = total.reduce((s, v) => s + v, 0) / total.length;
    expect(Math.abs(r.estimate.primal.value - mean)).toBeLessThan(1e-12 * mean);
  });

  it('the saved policy as a path evaluator reproduces the pricing pass on the same paths, bit for bit', () => {
    // Consistency of the two forms of the pricing pass (the study runs the evaluator form in its batches).
    const compiled = compileDeal(callableZero(68));
    const src = dealExerciseSource({ compiled, variant: hwVariant(0.08, 0.01, 0.1), maxStep: 0.25 });
    const r = priceExerciseRight(src, {
      seed: 'as-evaluator',
      regressionPaths: 3000,
      pricingPaths: 4000,
      batchSize: 4000,
    });
    const saved = JSON.parse(JSON.stringify(r.policy)) as ExercisePolicy;
    const ev = makeExercisePathEvaluator(compiled, saved);
    const values = ev(src.paths(4000, exerciseSeeds.pricing('as-evaluator', 0)));
    let sum = 0;
    for (let p = 0; p < values.length; p++) sum += values[p]!;
    expect(sum / values.length).toBe(r.estimate.primal.value);
    // A policy for other dates is refused with the field named.
    const other = { ...saved, dates: saved.dates.map((d) => ({ ...d, time: d.time + 0.5 })) };
    expect(() => makeExercisePathEvaluator(compiled, other)).toThrow(/exercise\.policy\.dates/);
  });

  it('re-running both passes and the dual for a deal reproduces the saved result bit for bit', () => {
    const input = {
      compiled: compileDeal(callableZero(68)),
      variant: hwVariant(0.08, 0.01, 0.1),
      maxStep: 0.25,
      settings: {
        seed: 'verify-me',
        regressionPaths: 2000,
        pricingPaths: 3000,
        batchSize: 1000,
        dual: { outerPaths: 5, innerPaths: 10 },
      },
    };
    const saved = JSON.parse(JSON.stringify(priceDealExercise(input)));
    const again = priceDealExercise(input);
    expect(compareExerciseResults(saved, again)).toEqual({ identical: true, differences: [] });
    // A hand-edited coefficient is detected.
    saved.policy.dates[0].coefficients[0] += 1e-9;
    expect(compareExerciseResults(saved, again).differences).toContain('policy');
  });

  it('a Bermudan swaption written in the deal language is bracketed by its bounds around the Hull–White tree', () => {
    // Independent reference: the Hull & White (1994) tree of this project on the 1y×4y case of
    // /work/shared/reference/published.md, Sec. 3 (a = 0.05, σ = 0.01, flat 4 %, fixed 4.2 %, notional 100),
    // here with exercise at 1, 2, 3 and 4 years. One right per date, each paying that date's payer swap value.
    const pay = [2, 3, 4, 5];
    const swapAt = (t: number) => {
      const rest = pay.filter((p) => p > t);
      const fixed = rest.map((p) => `bond(DOM, ${p})`).join(' + ');
      return `max(1 - bond(DOM, ${rest[rest.length - 1]}) - K * (${fixed}), 0)`;
    };
    const swaption: DealInput = {
      format: 'factor-triage/deal@1',
      name: 'Bermudan payer swaption in the deal language',
      notional: 100,
      currency: 'DOM',
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
      rates: ['DOM'],
      parameters: { K: 0.042 },
      schedules: {
        e1: { dates: [1] },
        e2: { dates: [2] },
        e3: { dates: [3] },
        e4: { dates: [4] },
        end: { dates: [5] },
      },
      events: [{ label: 'nothing', on: 'end', pay: { amount: '0' } }],
      exercise: [1, 2, 3, 4].map((t) => ({
        label: `enter at ${t}y`,
        on: `e${t}`,
        by: 'holder' as const,
        amount: swapAt(t),
      })),
    };
    const tree = hullWhiteTreeSwaption(
      flatCurve('DOM', 0.04),
      { a: 0.05, sigma: 0.01 },
      {
        type: 'payer',
        exerciseTimes: [1, 2, 3, 4],
        startTime: 1,
        payTimes: pay,
        strike: 0.042,
        notional: 100,
      },
      0.02,
    ).value;
    const src = dealExerciseSource({
      compiled: compileDeal(swaption),
      variant: hwVariant(0.05, 0.01, 0.04),
      maxStep: 0.25,
    });
    const r = priceExerciseRight(src, {
      seed: 'deal-swaption',
      regressionPaths: full ? 50_000 : 10_000,
      pricingPaths: full ? 200_000 : 30_000,
      dual: { outerPaths: full ? 500 : 60, innerPaths: full ? 300 : 60 },
    });
    const { value, se } = r.estimate.primal;
    const d = r.estimate.dual!;
    const info = `tree ${tree}; LSM ${value} ± ${se}; dual ${d.value} ± ${d.se}`;
    expect(se, info).toBeLessThan(0.02);
    expect(value, info).toBeLessThan(tree + 3 * se);
    expect(d.value, info).toBeGreaterThan(tree - 3 * d.se);
    expect(Math.abs(value - tree), info).toBeLessThan(0.01 * tree + 3 * se);
  });

  it('an issuer-callable fixed-coupon bond is the straight bond minus the Bermudan receiver swaption of the tree', () => {
    // common practice: calling at par on a coupon date cancels the remaining coupons and redemption against par,
    // which is the issuer exercising a receiver swaption (fixed rate = coupon) on the rest of the bond. Independent reference: the Hull & White (1994) tree of this
    // project, 1y×4y case of /work/shared/reference/published.md, Sec. 3 parameters, receiver side.
    const K = 0.042;
    const bond: DealInput = {
      format: 'factor-triage/deal@1',
      name: 'issuer-callable 5y bond',
      notional: 100,
      currency: 'DOM',
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
      rates: ['DOM'],
      parameters: { K },
      schedules: { coupons: { dates: [1, 2, 3, 4, 5] }, calls: { dates: [1, 2, 3, 4] }, end: { dates: [5] } },
      events: [
        { label: 'coupon', on: 'coupons', pay: { amount: 'K' } },
        { label: 'redemption', on: 'end', pay: { amount: '1' } },
      ],
      exercise: [{ label: 'issuer call at par', on: 'calls', by: 'issuer', amount: '1' }],
    };
    const curve = flatCurve('DOM', 0.04);
    const straight = 100 * ([1, 2, 3, 4, 5].reduce((s, t) => s + K * curve.df(t), 0) + curve.df(5));
    const receiver = hullWhiteTreeSwaption(
      curve,
      { a: 0.05, sigma: 0.01 },
      {
        type: 'receiver',
        exerciseTimes: [1, 2, 3, 4],
        startTime: 1,
        payTimes: [2, 3, 4, 5],
        strike: K,
        notional: 100,
      },
      0.02,
    ).value;
    const exact = straight - receiver;
    const src = dealExerciseSource({
      compiled: compileDeal(bond),
      variant: hwVariant(0.05, 0.01, 0.04),
      maxStep: 0.25,
    });
    const r = priceExerciseRight(src, {
      seed: 'callable-bond',
      regressionPaths: full ? 50_000 : 10_000,
      pricingPaths: full ? 200_000 : 30_000,
      dual: { outerPaths: full ? 500 : 60, innerPaths: full ? 300 : 60 },
    });
    const { value, se } = r.estimate.primal;
    const d = r.estimate.dual!;
    const info = `straight ${straight} − tree receiver ${receiver} = ${exact}; LSM ${value} ± ${se}; dual ${d.value} ± ${d.se}`;
    expect(se, info).toBeLessThan(0.1);
    // Issuer right: the policy estimate is biased high, the dual estimate low.
    expect(value, info).toBeGreaterThan(exact - 3 * se);
    expect(d.value, info).toBeLessThan(exact + 3 * d.se);
    expect(Math.abs(value - exact), info).toBeLessThan(0.01 * receiver + 3 * se);
  });

  it('the simulation runner prices with the saved policy through the exercise payoff factory, on its own batches', async () => {
    // Consistency: one runner batch uses the streams batchSeed(seed, 0) + ':' + driver, as the source's paths do.
    const compiled = compileDeal(callableZero(68));
    const variant = hwVariant(0.08, 0.01, 0.1);
    const src = dealExerciseSource({ compiled, variant, maxStep: 0.25 });
    const fit = priceExerciseRight(src, { seed: 'runner', regressionPaths: 3000, pricingPaths: 3000 });
    const n = 2048;
    const run = await runSimulation(
      {
        variants: [variant],
        payoff: {
          factory: exercisePayoffFactoryUrl(),
          description: { deals: [{ compiled, policies: { hw: fit.policy } }] },
        },
        grid: { eventTimes: compiled.gridTimes, maxStep: 0.25 },
        seed: 'runner-prices',
        maxPaths: n,
        batchSize: n,
      },
      inProcessExecutor(),
    );
    const stats = resultStats(run);
    const direct = makeExercisePathEvaluator(
      compiled,
      fit.policy,
    )(src.paths(n, batchSeed('runner-prices', 0)));
    const mean = direct.reduce((s, v) => s + v, 0) / n;
    expect(Math.abs(stats.mean(0) - mean), `runner ${stats.mean(0)}, direct ${mean}`).toBeLessThan(
      1e-9 * mean,
    );
  });

  it('every variant of a ladder regresses on the same basis; a state that does not vary at a date is left out', () => {
    // common practice (Longstaff & Schwartz 2001, Sec. 2: the basis is a modelling choice): a fair comparison
    // across variants needs the same basis wherever the state exists. Under deterministic rates the short rate is
    // the same on every path, so its terms drop out of the fit at each date.
    const compiled = compileDeal(callableZero(68));
    const withRates = priceDealExercise({
      compiled,
      variant: hwVariant(0.08, 0.01, 0.1),
      maxStep: 0.25,
      settings: { seed: 'basis', regressionPaths: 2000, pricingPaths: 2000 },
    });
    const deterministic = priceDealExercise({
      compiled,
      variant: { ...bsVariant(100, 0.2, 0.1), correlation: { names: ['eq:ALDR'], matrix: [[1]] } },
      maxStep: 0.25,
      settings: { seed: 'basis', regressionPaths: 2000, pricingPaths: 2000 },
    });
    expect(JSON.stringify(deterministic.policy.basis)).toBe(JSON.stringify(withRates.policy.basis));
    const rateIndex = withRates.policy.basis.stateNames.indexOf('rate:DOM');
    expect(rateIndex).toBeGreaterThanOrEqual(0);
    expect(withRates.policy.dates[0]!.scale[rateIndex]).toBeGreaterThan(0);
    expect(deterministic.policy.dates[0]!.scale[rateIndex]).toBe(0);
  });

  it('an issuer call that costs nothing is used at the first date on every path', () => {
    // common practice: calling at 0 cancels a bond worth more than 0, so the issuer calls at once.
    const src = dealExerciseSource({
      compiled: compileDeal(callableZero(0)),
      variant: hwVariant(0.08, 0.01, 0.1),
      maxStep: 0.25,
    });
    const r = priceExerciseRight(src, { seed: 'free-call', regressionPaths: 2000, pricingPaths: 2000 });
    expect(r.estimate.exerciseProbability[0]!.probability).toBe(1);
    expect(r.estimate.primal.value).toBe(0);
  });

  it('under Heston the variance joins the regression state of the callable note', () => {
    // DESIGN: the basis uses the variance where volatility is stochastic (same basis functions otherwise).
    const raw = JSON.parse(
      readFileSync(
        new URL('../../../samples/deals/callable-equity-linked-note.json', import.meta.url),
        'utf8',
      ),
    ) as unknown;
    const variant: VariantSpec = {
      ...hwVariant(0.05, 0.01, 0.03),
      equities: [
        {
          name: 'ALDR',
          currency: 'DOM',
          spot: 4200,
          divYield: 0.02,
          dynamics: { kind: 'heston', v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.5, rho: -0.6 },
        },
      ],
    };
    const src = dealExerciseSource({ compiled: compileDeal(raw), variant, maxStep: 0.25 });
    expect(src.right.stateNames).toEqual(['eq:ALDR', 'rate:DOM', 'var:ALDR']);
    const r = priceExerciseRight(src, { seed: 'heston-note', regressionPaths: 1500, pricingPaths: 1500 });
    expect(r.policy.basis.terms.length).toBe(10);
    expect(r.policy.basis.terms.map((t) => t.label)).toContain('z(eq:ALDR)·z(var:ALDR)');
  });

  it('rights held by both parties are refused with a message naming the field', () => {
    const both: DealInput = {
      ...callableZero(68),
      exercise: [
        { label: 'issuer call', on: 'call', by: 'issuer', amount: 'callPrice' },
        { label: 'holder put', on: 'call', by: 'holder', amount: '60' },
      ],
    };
    expect(() =>
      dealExerciseSource({ compiled: compileDeal(both), variant: hwVariant(0.08, 0.01, 0.1), maxStep: 0.25 }),
    ).toThrow(/deal\.exercise/);
  });

  for (const name of ['callable-equity-linked-note', 'callable-range-accrual']) {
    it(`the template ${name} compiles and prices with both bounds, probabilities and the bias note`, () => {
      const raw = JSON.parse(
        readFileSync(new URL(`../../../samples/deals/${name}.json`, import.meta.url), 'utf8'),
      ) as unknown;
      const compiled = compileDeal(raw);
      expect(compiled.exercise[0]!.by).toBe('issuer');
      const variant: VariantSpec = {
        ...bsVariant(4200, 0.2, 0.03),
        equities: [
          {
            name: 'ALDR',
            currency: 'DOM',
            spot: 4200,
            divYield: 0.02,
            dynamics: { kind: 'bs', volTimes: [30], vols: [0.2] },
          },
        ],
        rates: { DOM: { curve: flat(0.03), hw: { a: 0.05, sigma: 0.01 } } },
        correlation: {
          names: ['eq:ALDR', 'rate:DOM'],
          matrix: [
            [1, 0.2],
            [0.2, 1],
          ],
        },
      };
      const src = dealExerciseSource({ compiled, variant, maxStep: name.includes('range') ? 1 / 52 : 0.25 });
      expect(src.right.stateNames).toEqual(expect.arrayContaining(['eq:ALDR', 'rate:DOM']));
      const r = priceExerciseRight(src, {
        seed: name,
        regressionPaths: 1500,
        pricingPaths: 1500,
        dual: { outerPaths: 4, innerPaths: 8 },
      });
      const e = r.estimate;
      expect(Number.isFinite(e.primal.value) && e.primal.value > 0).toBe(true);
      // The notional is 1,000,000: a par-callable note is worth less than notional plus all coupons.
      expect(e.primal.value).toBeLessThan(1.5e6);
      expect(e.dual!.gap).toBeGreaterThanOrEqual(0);
      expect(e.dual!.value).toBeLessThanOrEqual(e.primal.value);
      expect(e.exerciseProbability.length).toBe(compiled.exercise[0]!.times.length);
      expect(e.biasNote).toMatch(/issuer/);
    });
  }
});
