/**
 * Cost of early exercise: the regression pass, the pricing pass and the dual bound (nested paths) for the Bermudan
 * put of Longstaff & Schwartz (2001, Table 1: S=36, σ=0.2, T=1, 50 dates) and for the callable equity-linked note
 * template under Heston + Hull–White, each beside the cost of pricing the same thing without the exercise right on
 * the same number of paths, measured in the same run (the baseline of the ratios).
 * Also the Hull–White tree used as the Bermudan swaption reference.
 */
import { readFileSync } from 'node:fs';
import { compileDeal } from '../src/engine/deal/compileDeal.ts';
import { evaluateDetailed } from '../src/engine/deal/dealEvaluator.ts';
import {
  dealExerciseSource,
  equallySpacedTimes,
  estimateDualGap,
  exerciseSeeds,
  fitExercisePolicy,
  lognormalBermudanSource,
  pricePolicy,
  regressionSample,
  type ExerciseSource,
} from '../src/engine/exercise/index.ts';
import { flatCurve } from '../src/engine/market/curve.ts';
import { hullWhiteTreeSwaption } from '../src/engine/models/hullWhiteTree.ts';
import { benchHybridVariant } from './fixtures.ts';
import { fmtTime, report } from './timing.ts';

/** Best wall time of `rounds` calls, in seconds (each call here takes far longer than the timer's resolution). */
function best(fn: () => unknown, rounds = 3): number {
  let t = Infinity;
  for (let r = 0; r < rounds; r++) {
    const t0 = performance.now();
    fn();
    t = Math.min(t, (performance.now() - t0) / 1000);
  }
  return t;
}

function benchSource(
  label: string,
  source: ExerciseSource,
  baseline: () => unknown,
  sizes: { regression: number; pricing: number; outer: number; inner: number },
): void {
  const base = best(baseline);
  console.log(report(`${label}: no exercise right, ${sizes.pricing} paths`, base, base));
  const regSeed = exerciseSeeds.regression('bench');
  const fit = () =>
    fitExercisePolicy(
      source.right,
      regressionSample(source, { seed: 'bench', regressionPaths: sizes.regression }),
      {
        seed: regSeed,
      },
    ).policy;
  let policy = fit();
  const reg = best(() => {
    policy = fit();
  });
  console.log(report(`${label}: regression pass, ${sizes.regression} paths`, reg, base));
  const pricing = best(() => pricePolicy(source, policy, { seed: 'bench', pricingPaths: sizes.pricing }));
  console.log(report(`${label}: pricing pass, ${sizes.pricing} paths`, pricing, base));
  let gap = { gap: 0, gapSe: 0, innerPaths: 0 };
  const dual = best(() => {
    gap = estimateDualGap(source, policy, {
      nOuter: sizes.outer,
      nInner: sizes.inner,
      outerSeed: exerciseSeeds.dualOuter('bench'),
      innerSeed: (p, j) => exerciseSeeds.dualInner('bench', p, j),
    });
  }, 1);
  console.log(report(`${label}: dual bound, ${sizes.outer}×${sizes.inner} nested`, dual, base));
  console.log(
    `  dual gap ${gap.gap.toPrecision(4)} ± ${gap.gapSe.toPrecision(2)} from ${gap.innerPaths} inner paths ` +
      `(${fmtTime(dual / Math.max(1, gap.innerPaths))} per inner path)`,
  );
}

export async function run(): Promise<void> {
  // Bermudan put, Longstaff & Schwartz (2001) Table 1 case.
  const put = lognormalBermudanSource({
    type: 'put',
    spot: 36,
    strike: 40,
    rate: 0.06,
    vol: 0.2,
    exerciseTimes: equallySpacedTimes(1, 50),
  });
  const nPut = 100_000;
  benchSource(
    'Bermudan put (50 dates)',
    put,
    () => {
      // Same paths, European payoff only: the value at the last date.
      const s = put.sample(nPut, exerciseSeeds.pricing('bench', 0));
      let sum = 0;
      for (let p = 0; p < nPut; p++) sum += s.exerciseValue[49 * nPut + p]!;
      return sum / nPut;
    },
    { regression: 50_000, pricing: nPut, outer: 200, inner: 100 },
  );

  // Callable equity-linked note under Heston + Hull–White (invented demo parameters).
  const variant = benchHybridVariant('heston-hw');

  const compiled = compileDeal(
    JSON.parse(
      readFileSync(new URL('../samples/deals/callable-equity-linked-note.json', import.meta.url), 'utf8'),
    ),
  );
  const note = dealExerciseSource({ compiled, variant, maxStep: 0.25 });
  const nNote = 20_000;
  benchSource(
    'Callable note (8 call dates, 40 steps)',
    note,
    () => {
      const batch = note.paths(nNote, exerciseSeeds.pricing('bench', 0));
      const total = evaluateDetailed(compiled, batch).total;
      return total.reduce((s, v) => s + v, 0) / nNote;
    },
    { regression: 20_000, pricing: nNote, outer: 50, inner: 50 },
  );

  // Hull–White tree reference for the 1y×4y Bermudan swaption (two trees + Richardson).
  const curve = flatCurve('DOM', 0.04);
  const spec = {
    type: 'payer' as const,
    exerciseTimes: [1, 2, 3, 4],
    startTime: 1,
    payTimes: [2, 3, 4, 5],
    strike: 0.042,
    notional: 100,
  };
  const treeCoarse = best(() => hullWhiteTreeSwaption(curve, { a: 0.05, sigma: 0.01 }, spec, 0.02));
  console.log(report('Hull–White tree Bermudan swaption, Δt ≤ 0.02 (+ halved)', treeCoarse, treeCoarse));
  const treeFine = best(() => hullWhiteTreeSwaption(curve, { a: 0.05, sigma: 0.01 }, spec, 0.01));
  console.log(report('Hull–White tree Bermudan swaption, Δt ≤ 0.01 (+ halved)', treeFine, treeCoarse));
}
