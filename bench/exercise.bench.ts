/**
 * Cost of early exercise: the regression pass, the pricing pass and the dual bound (nested paths) for the Bermudan
 * put of Longstaff & Schwartz (2001, Table 1: S=36, σ=0.2, T=1, 50 dates) and for the callable equity-linked note
 * template under Heston + Hull–White, each beside the cost of pricing the same thing without the exercise right on
 * the same number of paths, measured in the same run (the baseline of the ratios); each dual line also gives its
 * ratio to the pricing pass. The dual bound is timed plain and with more inner paths near the exercise boundary
 * (50 and 52 weekly dates), and for the note with inner paths replaying the outer history against branching from
 * the outer state (quarterly and weekly grids).
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
  type DualSettings,
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

/** One dual estimator to time: its source (inner-path start) and settings beyond the outer and inner counts. */
interface DualCase {
  name: string;
  source?: ExerciseSource;
  inner?: number;
  nearBoundary?: DualSettings['nearBoundary'];
  /** Timed rounds (best kept; default 1). */
  rounds?: number;
}

function benchSource(
  label: string,
  source: ExerciseSource,
  baseline: () => unknown,
  sizes: { regression: number; pricing: number; outer: number; inner: number },
  duals: DualCase[] = [{ name: 'dual bound' }],
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
  console.log(`  (dual lines below: ratio to the pricing pass in brackets)`);
  for (const c of duals) {
    const inner = c.inner ?? sizes.inner;
    let gap = { gap: 0, gapSe: 0, innerPaths: 0, nearRuns: 0, innerRuns: 0 };
    const dual = best(() => {
      gap = estimateDualGap(c.source ?? source, policy, {
        nOuter: sizes.outer,
        nInner: inner,
        nearBoundary: c.nearBoundary,
        outerSeed: exerciseSeeds.dualOuter('bench'),
        innerSeed: (p, j) => exerciseSeeds.dualInner('bench', p, j),
      });
    }, c.rounds ?? 1);
    const near = c.nearBoundary ? `, ${c.nearBoundary.innerPaths} near the boundary` : '';
    console.log(
      `${report(`${label}: ${c.name}, ${sizes.outer}×${inner}${near}`, dual, base)}  [${(dual / pricing).toFixed(2)} x pricing]`,
    );
    console.log(
      `  dual gap ${gap.gap.toPrecision(4)} ± ${gap.gapSe.toPrecision(2)} from ${gap.innerPaths} inner paths ` +
        `(${gap.nearRuns} of ${gap.innerRuns} inner runs near the boundary; ` +
        `${fmtTime(dual / Math.max(1, gap.innerPaths))} per inner path)`,
    );
  }
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
    [{ name: 'dual bound' }, { name: 'dual, boundary refined', nearBoundary: { width: 2, innerPaths: 400 } }],
  );

  // Weekly exercise over a year: inner-path noise inflates the plain gap; the refinement against the plain estimator
  // on the same base and on about the same total number of inner paths.
  const weekly = lognormalBermudanSource({
    type: 'put',
    spot: 36,
    strike: 40,
    rate: 0.06,
    vol: 0.2,
    exerciseTimes: equallySpacedTimes(1, 52),
  });
  benchSource(
    'Bermudan put (52 weekly dates)',
    weekly,
    () => {
      const s = weekly.sample(nPut, exerciseSeeds.pricing('bench', 0));
      let sum = 0;
      for (let p = 0; p < nPut; p++) sum += s.exerciseValue[51 * nPut + p]!;
      return sum / nPut;
    },
    { regression: 50_000, pricing: nPut, outer: 200, inner: 64 },
    [
      { name: 'dual bound' },
      { name: 'dual, boundary refined', nearBoundary: { width: 2, innerPaths: 256 } },
      { name: 'dual bound, same budget', inner: 200 },
    ],
  );

  // Callable equity-linked note under Heston + Hull–White (invented demo parameters).
  const variant = benchHybridVariant('heston-hw');

  const compiled = compileDeal(
    JSON.parse(
      readFileSync(new URL('../samples/deals/callable-equity-linked-note.json', import.meta.url), 'utf8'),
    ),
  );
  // Inner paths branching from the outer state (default) against replaying the outer normals, on a quarterly
  // and on a weekly grid (where the replayed history dominates the cost of the early call dates).
  for (const grid of [
    { maxStep: 0.25, label: '40 steps', nNote: 20_000, outer: 50, inner: 50 },
    { maxStep: 1 / 52, label: '520 steps', nNote: 4000, outer: 16, inner: 32 },
  ]) {
    const note = dealExerciseSource({ compiled, variant, maxStep: grid.maxStep });
    const replay = dealExerciseSource({ compiled, variant, maxStep: grid.maxStep, innerStart: 'replay' });
    const nNote = grid.nNote;
    benchSource(
      `Callable note (8 call dates, ${grid.label})`,
      note,
      () => {
        const batch = note.paths(nNote, exerciseSeeds.pricing('bench', 0));
        const total = evaluateDetailed(compiled, batch).total;
        return total.reduce((s, v) => s + v, 0) / nNote;
      },
      { regression: nNote, pricing: nNote, outer: grid.outer, inner: grid.inner },
      [
        { name: 'dual, inner paths replay history', source: replay, rounds: 3 },
        { name: 'dual, inner paths branch', rounds: 3 },
      ],
    );
  }

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
