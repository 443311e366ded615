import { describe, it, expect } from 'vitest';
import { hullWhiteBermudanSwaptionSource, priceExerciseRight } from '../../../src/engine/exercise/index.ts';
import { hullWhiteTreeSwaption } from '../../../src/engine/models/hullWhiteTree.ts';
import { makeHullWhite } from '../../../src/engine/models/hullWhite.ts';
import { flatCurve, makeCurve } from '../../../src/engine/market/curve.ts';

const full = process.env.FT_PROFILE === 'full';
const paths = full
  ? { regressionPaths: 100_000, pricingPaths: 400_000 }
  : { regressionPaths: 20_000, pricingPaths: 50_000 };

/**
 * The 1y×4y case of /work/shared/reference/published.md, Sec. 3 (constructed there; Jamshidian closed form
 * 1.08550760853, QuantLib JamshidianSwaptionEngine 1.08550752453): a = 0.05, σ = 0.01, flat 4 %, fixed 4.2 % annual,
 * notional 100.
 */
const CASE = { a: 0.05, sigma: 0.01, startTime: 1, payTimes: [2, 3, 4, 5], strike: 0.042, notional: 100 };
const curve = flatCurve('DOM', 0.04);

describe('Bermudan swaption under Hull–White by Longstaff–Schwartz', () => {
  it('with one exercise date reproduces the published Jamshidian value within 3 SE', () => {
    const src = hullWhiteBermudanSwaptionSource({ curve, ...CASE, type: 'payer', exerciseTimes: [1] });
    const r = priceExerciseRight(src, { seed: 17, ...paths });
    const { value, se } = r.estimate.primal;
    const info = `LSM ${value} ± ${se}, Jamshidian 1.08550760853`;
    expect(se, info).toBeLessThan(0.012);
    expect(Math.abs(value - 1.08550760853), info).toBeLessThan(3 * se);
  });

  it('with one exercise date on a sloped curve matches the analytic Jamshidian swaption within 3 SE', () => {
    // Jamshidian (1989), via makeHullWhite's swaption (the analytic model of the project).
    const sloped = makeCurve({
      currency: 'DOM',
      times: [1, 2, 5, 10],
      zeroRates: [0.02, 0.024, 0.03, 0.034],
    });
    const spec = {
      a: 0.08,
      sigma: 0.009,
      startTime: 2,
      payTimes: [3, 4, 5, 6, 7],
      strike: 0.031,
      notional: 100,
    };
    const exact = makeHullWhite(sloped, spec).swaption({
      type: 'receiver',
      expiry: 2,
      payTimes: spec.payTimes,
      strike: spec.strike,
      notional: 100,
    });
    const r = priceExerciseRight(
      hullWhiteBermudanSwaptionSource({ curve: sloped, ...spec, type: 'receiver', exerciseTimes: [2] }),
      {
        seed: 23,
        ...paths,
      },
    );
    const { value, se } = r.estimate.primal;
    expect(Math.abs(value - exact), `LSM ${value} ± ${se}, Jamshidian ${exact}`).toBeLessThan(3 * se);
  });

  it('brackets the tree value: policy estimate ≤ tree + 3 SE and dual bound ≥ tree − 3 SE', () => {
    // Independent reference: the Hull & White (1994) trinomial tree of this project (Richardson-extrapolated).
    const exerciseTimes = [1, 2, 3, 4];
    const tree = hullWhiteTreeSwaption(curve, CASE, { ...CASE, type: 'payer', exerciseTimes }, 0.02).value;
    const src = hullWhiteBermudanSwaptionSource({ curve, ...CASE, type: 'payer', exerciseTimes });
    const r = priceExerciseRight(src, {
      seed: 29,
      ...paths,
      dual: { outerPaths: full ? 1000 : 200, innerPaths: full ? 500 : 100 },
    });
    const { value, se } = r.estimate.primal;
    const d = r.estimate.dual!;
    const info = `tree ${tree}; LSM ${value} ± ${se}; dual ${d.value} ± ${d.se} (gap ${d.gap} ± ${d.gapSe})`;
    expect(se, info).toBeLessThan(0.012);
    expect(value, info).toBeLessThan(tree + 3 * se);
    expect(d.value, info).toBeGreaterThan(tree - 3 * d.se);
    // The estimated policy is close to optimal here: both bounds within 1 % of the tree.
    expect(Math.abs(value - tree), info).toBeLessThan(0.01 * tree + 3 * se);
    expect(d.gap, info).toBeLessThan(0.01 * tree);
    // Exercise probabilities: one per date, a share never exercised, all summing to one.
    const total =
      r.estimate.exerciseProbability.reduce((s, x) => s + x.probability, 0) + r.estimate.neverExercised;
    expect(Math.abs(total - 1)).toBeLessThan(1e-12);
  });

  it('with one exercise date the policy is optimal and the dual gap is exactly zero', () => {
    // Andersen & Broadie (2004): the gap vanishes for the optimal policy; with one date, exercising whenever the
    // swap is worth more than nothing is optimal, and nothing is paid afterwards (inner values are exactly 0).
    const src = hullWhiteBermudanSwaptionSource({ curve, ...CASE, type: 'payer', exerciseTimes: [1] });
    const r = priceExerciseRight(src, {
      seed: 41,
      regressionPaths: 2000,
      pricingPaths: 2000,
      dual: { outerPaths: 50, innerPaths: 20 },
    });
    expect(r.estimate.dual!.gap).toBe(0);
    expect(r.estimate.dual!.value).toBe(r.estimate.primal.value);
  });

  it('a swaption struck so high it is never in the money is never exercised', () => {
    // common practice: a payer at a 50 % fixed rate has swap value 1 − P(t,T_m) − 0.5 Σ τ_i P(t,T_i) < 0 on every
    // path when rates are near 4 %, so the exercise value is zero everywhere.
    const src = hullWhiteBermudanSwaptionSource({
      curve,
      ...CASE,
      strike: 0.5,
      type: 'payer',
      exerciseTimes: [1, 2, 3, 4],
    });
    const r = priceExerciseRight(src, { seed: 31, regressionPaths: 2000, pricingPaths: 2000 });
    expect(r.estimate.primal.value).toBe(0);
    expect(r.estimate.neverExercised).toBe(1);
  });

  it('a payer deep in the money at the first date is exercised there', () => {
    // common practice: at a −20 % fixed rate the payer receives floating plus 20 % fixed; waiting forfeits the
    // first period's coupon, so every path exercises at the first date.
    const src = hullWhiteBermudanSwaptionSource({
      curve,
      ...CASE,
      strike: -0.2,
      type: 'payer',
      exerciseTimes: [1, 2, 3, 4],
    });
    const r = priceExerciseRight(src, { seed: 37, regressionPaths: 4000, pricingPaths: 4000 });
    expect(r.estimate.exerciseProbability[0]!.probability).toBe(1);
  });
});
