/**
 * Early exercise end to end: the Longstaff–Schwartz (2001) regression pass on its own paths, the pricing pass in
 * ordinary batches with flat memory, and optionally the Andersen–Broadie (2004) dual bound, with the exercise
 * probabilities and the direction of each bias stated in the result.
 *
 * Seed streams (each derived by `batchSeed` from the random module, so each can be recomputed alone):
 *   regression batch c `batchSeed(seed + '|exercise-regression', c)` (drawn batch by batch, kept only at the
 *   exercise dates: memory paths × dates × state size),
 *   pricing batch b  `batchSeed(seed + '|exercise-pricing', b)`,
 *   dual outer paths `batchSeed(seed + '|exercise-dual', 0)`,
 *   inner paths of outer path p at date j `batchSeed(seed + '|exercise-inner|' + j, p)`.
 * The same seed therefore reproduces the policy and every estimate bit for bit.
 */
import { fail, requirePositive } from '../errors.ts';
import { batchSeed } from '../random/index.ts';
import { concatSamples } from './concatSamples.ts';
import { estimateDualGap, type DualRefinement } from './dualBound.ts';
import { meanAndSe, mergeExerciseSums, pricingSums } from './pricingPass.ts';
import { fitExercisePolicy } from './regressionPass.ts';
import type { ExerciseSource } from './source.ts';
import type {
  DualEstimate,
  ExerciseEstimate,
  ExercisePolicy,
  ExerciseSample,
  ExerciseSums,
} from './types.ts';

/** Settings of {@link priceExerciseRight}. */
export interface ExercisePricingSettings {
  /** Run seed (string or non-negative integer). */
  seed: string | number;
  /** Paths of the regression pass (all held in memory: paths × dates × state size). */
  regressionPaths: number;
  /** Paths of the pricing pass, simulated in batches of `batchSize`. */
  pricingPaths: number;
  /** Pricing batch size (default 10,000). */
  batchSize?: number;
  /** Basis degree (default 2) and whether the exercise value is a regressor (default false). */
  degree?: number;
  includeExerciseValue?: boolean;
  /**
   * Dual bound with nested simulation; omitted = no dual bound. `nearBoundary`: more inner paths where the policy
   * is close to indifferent (see {@link DualRefinement}); omitted = `innerPaths` everywhere.
   */
  dual?: { outerPaths: number; innerPaths: number; nearBoundary?: DualRefinement };
}

/** Timings of the passes, in milliseconds. */
export interface ExerciseTimings {
  regressionMs: number;
  pricingMs: number;
  dualMs: number;
}

/** Everything {@link priceExerciseRight} returns (plain data). */
export interface ExercisePricingResult {
  policy: ExercisePolicy;
  estimate: ExerciseEstimate;
  timings: ExerciseTimings;
}

/** Seed strings of the passes, as documented above. */
export const exerciseSeeds = {
  regression: (seed: string | number, c = 0): string => batchSeed(`${seed}|exercise-regression`, c),
  pricing: (seed: string | number, b: number): string => batchSeed(`${seed}|exercise-pricing`, b),
  dualOuter: (seed: string | number): string => batchSeed(`${seed}|exercise-dual`, 0),
  dualInner: (seed: string | number, p: number, j: number): string =>
    batchSeed(`${seed}|exercise-inner|${j}`, p),
};

/** The bias statement attached to every estimate. */
export function biasNote(holder: 'holder' | 'issuer'): string {
  return holder === 'holder'
    ? 'The exercise policy is estimated, hence sub-optimal: the policy estimate of this holder right is biased low ' +
        '(a lower bound); the dual estimate is an upper bound; the true value lies between them up to Monte Carlo error.'
    : 'The exercise policy is estimated, hence sub-optimal for the issuer: the policy estimate of the holder value is ' +
        'biased high (an upper bound); the dual estimate is a lower bound; the true value lies between them up to ' +
        'Monte Carlo error.';
}

/** Draws the regression paths batch by batch (`batchSize` each) and keeps them at the exercise dates only. */
export function regressionSample(
  source: ExerciseSource,
  settings: Pick<ExercisePricingSettings, 'seed' | 'regressionPaths' | 'batchSize'>,
): ExerciseSample {
  const batchSize = settings.batchSize ?? 10_000;
  requirePositive('exercise.batchSize', batchSize);
  const parts: ExerciseSample[] = [];
  for (let c = 0, done = 0; done < settings.regressionPaths; c++) {
    const n = Math.min(batchSize, settings.regressionPaths - done);
    parts.push(source.sample(n, exerciseSeeds.regression(settings.seed, c)));
    done += n;
  }
  return concatSamples(parts);
}

/** Runs the pricing pass of an already fitted policy (e.g. to verify a saved study). */
export function pricePolicy(
  source: ExerciseSource,
  policy: ExercisePolicy,
  settings: Pick<ExercisePricingSettings, 'seed' | 'pricingPaths' | 'batchSize'>,
): ExerciseSums {
  const batchSize = settings.batchSize ?? 10_000;
  requirePositive('exercise.batchSize', batchSize);
  const parts: ExerciseSums[] = [];
  for (let b = 0, done = 0; done < settings.pricingPaths; b++) {
    const n = Math.min(batchSize, settings.pricingPaths - done);
    parts.push(pricingSums(policy, source.sample(n, exerciseSeeds.pricing(settings.seed, b))));
    done += n;
  }
  return mergeExerciseSums(parts);
}

/**
 * Prices an exercise right: regression pass → policy; pricing pass → primal estimate and exercise probabilities;
 * optional dual pass → the other bound and the gap between them.
 */
export function priceExerciseRight(
  source: ExerciseSource,
  settings: ExercisePricingSettings,
): ExercisePricingResult {
  for (const key of ['regressionPaths', 'pricingPaths'] as const) {
    const v = settings[key];
    if (!(Number.isInteger(v) && v > 0))
      fail(
        'E_EXERCISE_PATHS',
        `exercise.${key}`,
        'must be a positive integer',
        v,
        'give a path count such as 20000',
      );
  }
  const right = source.right;
  const t0 = performance.now();
  const regSeed = exerciseSeeds.regression(settings.seed);
  const reg = fitExercisePolicy(right, regressionSample(source, settings), {
    seed: regSeed,
    degree: settings.degree,
    includeExerciseValue: settings.includeExerciseValue,
  });
  const t1 = performance.now();
  const sums = pricePolicy(source, reg.policy, settings);
  const primal = meanAndSe(sums);
  const t2 = performance.now();
  let dual: DualEstimate | undefined;
  let dualMs = 0;
  if (settings.dual) {
    const { outerPaths, innerPaths } = settings.dual;
    for (const [k, v] of [
      ['outerPaths', outerPaths],
      ['innerPaths', innerPaths],
    ] as const)
      if (!(Number.isInteger(v) && v > 0))
        fail('E_EXERCISE_PATHS', `exercise.dual.${k}`, 'must be a positive integer', v);
    const g = estimateDualGap(source, reg.policy, {
      nOuter: outerPaths,
      nInner: innerPaths,
      nearBoundary: settings.dual.nearBoundary,
      outerSeed: exerciseSeeds.dualOuter(settings.seed),
      innerSeed: (p, j) => exerciseSeeds.dualInner(settings.seed, p, j),
    });
    dualMs = performance.now() - t2;
    const sign = right.holder === 'holder' ? 1 : -1;
    dual = {
      value: primal.value + sign * g.gap,
      gap: g.gap,
      gapSe: g.gapSe,
      se: Math.sqrt(primal.se * primal.se + g.gapSe * g.gapSe),
      nOuter: g.nOuter,
      nInner: g.nInner,
      innerPaths: g.innerPaths,
      millis: dualMs,
    };
    if (settings.dual.nearBoundary)
      dual.nearBoundary = { ...settings.dual.nearBoundary, runs: g.nearRuns, of: g.innerRuns };
  }
  const exerciseProbability = right.times.map((time, j) => ({
    time,
    probability: sums.exercisedAt[j]! / sums.nPaths,
  }));
  const exercised = sums.exercisedAt.reduce((a, b) => a + b, 0);
  const estimate: ExerciseEstimate = {
    primal: { value: primal.value, se: primal.se, nPaths: sums.nPaths },
    inSample: reg.inSampleValue,
    exerciseProbability,
    neverExercised: 1 - exercised / sums.nPaths,
    biasNote: biasNote(right.holder),
  };
  if (dual) estimate.dual = dual;
  return { policy: reg.policy, estimate, timings: { regressionMs: t1 - t0, pricingMs: t2 - t1, dualMs } };
}
