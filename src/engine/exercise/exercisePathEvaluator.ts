/**
 * A fitted exercise policy as an ordinary payoff evaluator: batch of paths → per-path present value of the deal
 * with its exercise right exercised by the policy. This is the pricing pass in the form the simulation runner and
 * the factor study already use (flat memory per batch, common random numbers across variants, their accumulators
 * and paired standard errors). The policy is fitted beforehand by the regression pass on its own paths.
 */
import { evaluateDetailed, type DealEvaluatorOptions } from '../deal/dealEvaluator.ts';
import type { CompiledDeal } from '../deal/types.ts';
import type { PathEvaluator } from '../simulation/types.ts';
import { fail } from '../errors.ts';
import { applyExercisePolicy } from './pricingPass.ts';
import { dealExerciseSample, dealRightOf } from './sources/dealExerciseSource.ts';
import type { ExercisePolicy } from './types.ts';

/**
 * Builds the evaluator. Throws when the policy does not fit the deal (other dates or another holder).
 * Bias: the policy is sub-optimal, so the values are biased low for a holder's right, high for an issuer's.
 */
export function makeExercisePathEvaluator(
  compiled: CompiledDeal,
  policy: ExercisePolicy,
  options: DealEvaluatorOptions = {},
): PathEvaluator {
  const { times, holder } = dealRightOf(compiled);
  if (holder !== policy.holder)
    fail(
      'E_POLICY_MISMATCH',
      'exercise.policy.holder',
      `must be '${holder}' like the deal's right`,
      policy.holder,
    );
  if (
    times.length !== policy.dates.length ||
    times.some((t, j) => Math.abs(t - policy.dates[j]!.time) > 1e-10)
  )
    fail(
      'E_POLICY_MISMATCH',
      'exercise.policy.dates',
      `must be the deal's exercise dates (${times.length} of them)`,
      policy.dates.map((d) => d.time),
      're-run the regression pass for this deal',
    );
  const layout = {
    times,
    holder,
    stateNames: policy.basis.stateNames,
    fundingSpread: compiled.fundingSpread ?? 0,
  };
  return (batch) => {
    const det = evaluateDetailed(compiled, batch, options);
    return applyExercisePolicy(policy, dealExerciseSample(det, batch, layout)).values;
  };
}
