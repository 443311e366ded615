/**
 * Payoff factory for the simulation runner (`PayoffFactory` of simulation/runSpec.ts) that prices deals with their
 * exercise rights exercised by fitted policies: the pricing pass run by the ordinary runner, in batches, on any
 * number of workers, on the common random numbers of the ladder. The description is plain data: the compiled deals
 * and, per deal, one policy per variant id (each variant has its own regression pass).
 * Module URL for a run spec: {@link exercisePayoffFactoryUrl}.
 */
import { fail } from '../errors.ts';
import type { DealEvaluatorOptions } from '../deal/dealEvaluator.ts';
import { COMPILED_FORMAT, type CompiledDeal } from '../deal/types.ts';
import type { EvaluatorContext } from '../simulation/runSpec.ts';
import type { PathEvaluator } from '../simulation/types.ts';
import { makeExercisePathEvaluator } from './exercisePathEvaluator.ts';
import type { ExercisePolicy } from './types.ts';

/** What a run spec carries: deals with their policies, keyed by variant id. */
export interface ExercisePayoffDescription {
  deals: { compiled: CompiledDeal; policies: Record<string, ExercisePolicy> }[];
  options?: DealEvaluatorOptions;
}

function described(description: unknown): ExercisePayoffDescription {
  const d = description as ExercisePayoffDescription | null;
  if (!d || !Array.isArray(d.deals) || d.deals.length === 0)
    fail(
      'E_NO_PAYOFF',
      'payoff.description.deals',
      'must list at least one deal with its policies',
      description,
    );
  d.deals.forEach((x, i) => {
    if (!x?.compiled || x.compiled.format !== COMPILED_FORMAT)
      fail(
        'E_NOT_COMPILED',
        `payoff.description.deals[${i}].compiled.format`,
        `must be ${COMPILED_FORMAT} (compile the deal first)`,
        x?.compiled?.format,
      );
  });
  return d;
}

/** One evaluator per deal for the variant in `context`, using that variant's policy. */
export function createEvaluators(description: unknown, context: EvaluatorContext): PathEvaluator[] {
  const d = described(description);
  const fxNames: Record<string, string> = { ...(d.options?.fxNames ?? {}) };
  for (const f of context.variant.fx) fxNames[`${f.foreign}/${context.variant.domestic}`] ??= f.name;
  return d.deals.map((x, i) => {
    const policy = x.policies[context.variant.id];
    if (!policy)
      fail(
        'E_NO_POLICY',
        `payoff.description.deals[${i}].policies.${context.variant.id}`,
        'must hold the exercise policy fitted for this variant',
        Object.keys(x.policies),
        'run the regression pass for every variant first',
      );
    for (const t of x.compiled.gridTimes) context.indexOf(t, `deal ${x.compiled.name} date t = ${t}`);
    return makeExercisePathEvaluator(x.compiled, policy, { ...d.options, fxNames });
  });
}

/** Every time (years) the deals observe, pay or may be exercised: the grid must contain them. */
export function eventTimes(description: unknown): number[] {
  const times = described(description).deals.flatMap((x) => [
    ...x.compiled.gridTimes,
    ...x.compiled.exercise.flatMap((e) => e.times),
  ]);
  return [...new Set(times)].sort((a, b) => a - b);
}

/** Absolute URL of this module, for `RunSpec.payoff.factory`. */
export function exercisePayoffFactoryUrl(): string {
  return new URL('./exercisePayoffFactory.ts', import.meta.url).href;
}
