/**
 * Early exercise: Longstaff–Schwartz (2001) regression and pricing passes, the Andersen–Broadie (2004) dual bound,
 * and the sources that feed them (Bermudan equity options and swaptions, and any deal of the deal language).
 *
 * For a ladder of variants (the factor study):
 * 1. per variant: `priceDealExercise({ compiled, variant, layoutVariants: allVariants, maxStep, settings })` runs the
 *    regression pass on its own seed stream, the pricing pass and (with `settings.dual`) the dual bound; the result's
 *    `policy` is plain data to save, `estimate.primal` / `estimate.dual` are the two bounds (the gap
 *    `estimate.dual.gap` ± `gapSe` belongs in the error budget), `estimate.exerciseProbability` the exercise
 *    probabilities and `estimate.biasNote` the direction of each bias. The dual's inner paths branch from each
 *    outer path's state (only the steps after the exercise date are simulated); with many exercise dates,
 *    `settings.dual.nearBoundary` (e.g. `{ width: 2, innerPaths: 4 × innerPaths }`) spends more inner paths where
 *    the policy is close to indifferent, which lowers the noise-driven part of the gap;
 * 2. paired comparisons across variants on common random numbers: run the simulation runner with the payoff factory
 *    `exercisePayoffFactoryUrl()` and description `{ deals: [{ compiled, policies: { [variantId]: policy } }] }`;
 * 3. verify: re-run step 1 with the same seed and `compareExerciseResults(saved, rerun)` (bit for bit).
 *
 * Section, algorithm and equation numbers cited in this folder's comments are given from memory; the papers and
 * books themselves are the sources.
 */
export * from './types.ts';
export * from './leastSquares.ts';
export * from './basis.ts';
export * from './continuation.ts';
export * from './regressionPass.ts';
export * from './concatSamples.ts';
export * from './pricingPass.ts';
export * from './source.ts';
export * from './dualBound.ts';
export * from './priceExerciseRight.ts';
export * from './sources/lognormalBermudan.ts';
export * from './sources/hullWhiteBermudanSwaption.ts';
export * from './sources/dealExerciseSource.ts';
export * from './exercisePathEvaluator.ts';
export * from './priceDealExercise.ts';
export { exercisePayoffFactoryUrl, type ExercisePayoffDescription } from './exercisePayoffFactory.ts';
export * from './exerciseSummary.ts';
