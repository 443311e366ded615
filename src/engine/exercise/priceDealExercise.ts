/**
 * Entry points for the factor study: price a deal's exercise right under one ladder variant (regression pass,
 * pricing pass, dual bound), and check that a re-run reproduces a saved result bit for bit.
 */
import type { DealEvaluatorOptions } from '../deal/dealEvaluator.ts';
import type { CompiledDeal } from '../deal/types.ts';
import type { PrepareOptions } from '../simulation/pathGenerator.ts';
import type { VariantSpec } from '../simulation/types.ts';
import {
  priceExerciseRight,
  type ExercisePricingResult,
  type ExercisePricingSettings,
} from './priceExerciseRight.ts';
import { dealExerciseSource } from './sources/dealExerciseSource.ts';

/** Inputs of {@link priceDealExercise}. */
export interface DealExerciseInput {
  compiled: CompiledDeal;
  variant: VariantSpec;
  /**
   * All variants of the ladder: they fix the shared layout of normals, so every variant sees the same random
   * numbers in the exercise passes (common random numbers). Default: this variant alone.
   */
  layoutVariants?: VariantSpec[];
  /** Largest simulation step (years). */
  maxStep: number;
  settings: ExercisePricingSettings;
  evaluator?: DealEvaluatorOptions;
  prepare?: PrepareOptions;
}

/** Prices the deal's exercise right under one variant; the result is plain data (policy, estimate, timings). */
export function priceDealExercise(input: DealExerciseInput): ExercisePricingResult & { variantId: string } {
  const source = dealExerciseSource({
    compiled: input.compiled,
    variant: input.variant,
    layoutVariants: input.layoutVariants,
    maxStep: input.maxStep,
    evaluator: input.evaluator,
    prepare: input.prepare,
  });
  return { variantId: input.variant.id, ...priceExerciseRight(source, input.settings) };
}

/**
 * Compares a saved result with a re-run: the policy (basis, standardisation, coefficients) and every estimate must
 * be identical; timings are ignored. Returns the names of the parts that differ.
 */
export function compareExerciseResults(
  saved: Pick<ExercisePricingResult, 'policy' | 'estimate'>,
  rerun: Pick<ExercisePricingResult, 'policy' | 'estimate'>,
): { identical: boolean; differences: string[] } {
  const differences: string[] = [];
  if (JSON.stringify(saved.policy) !== JSON.stringify(rerun.policy)) differences.push('policy');
  const strip = (e: ExercisePricingResult['estimate']) => ({
    ...e,
    dual: e.dual ? { ...e.dual, millis: 0 } : undefined,
  });
  const a = strip(saved.estimate);
  const b = strip(rerun.estimate);
  for (const key of ['primal', 'inSample', 'dual', 'exerciseProbability', 'neverExercised'] as const)
    if (JSON.stringify(a[key]) !== JSON.stringify(b[key])) differences.push(`estimate.${key}`);
  return { identical: differences.length === 0, differences };
}
