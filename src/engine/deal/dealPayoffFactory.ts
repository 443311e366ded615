/**
 * The payoff factory the simulation runner loads inside a worker for deals (`PayoffFactory` of
 * simulation/runSpec.ts). Its description is a plain {@link DealPayoffDescription}: the compiled deal, no mathjs.
 * Module specifier for a run spec: {@link DEAL_PAYOFF_FACTORY}.
 */
import { fail } from '../errors.ts';
import type { EvaluatorContext } from '../simulation/runSpec.ts';
import type { PathEvaluator } from '../simulation/types.ts';
import { makeDealEvaluator, type DealEvaluatorOptions } from './dealEvaluator.ts';
import { COMPILED_FORMAT, type CompiledDeal } from './types.ts';

/** Specifier of this module, relative to the engine's simulation folder, for `RunSpec.payoff.factory`. */
export const DEAL_PAYOFF_FACTORY = '../deal/dealPayoffFactory.ts';

/** What a run spec carries for a deal: one compiled deal, or several (one evaluator output each). */
export interface DealPayoffDescription {
  deals: CompiledDeal[];
  options?: DealEvaluatorOptions;
}

function deals(description: unknown): DealPayoffDescription {
  const d = description as DealPayoffDescription | null;
  if (!d || !Array.isArray(d.deals) || d.deals.length === 0)
    fail('E_NO_PAYOFF', 'payoff.description.deals', 'must list at least one compiled deal', description);
  d.deals.forEach((c, i) => {
    if (!c || c.format !== COMPILED_FORMAT)
      fail(
        'E_NOT_COMPILED',
        `payoff.description.deals[${i}].format`,
        `must be ${COMPILED_FORMAT} (compile the deal first)`,
        c?.format,
      );
  });
  return d;
}

/**
 * One evaluator per compiled deal, for the variant in `context`. FX series are looked up under the variant's own FX
 * names (`FxSpec.name`, units of the variant's domestic currency per unit of `foreign`).
 */
export function createEvaluators(description: unknown, context: EvaluatorContext): PathEvaluator[] {
  const d = deals(description);
  const fxNames: Record<string, string> = { ...(d.options?.fxNames ?? {}) };
  for (const f of context.variant.fx) fxNames[`${f.foreign}/${context.variant.domestic}`] ??= f.name;
  return d.deals.map((c) => {
    if (c.currency !== context.variant.domestic)
      fail(
        'E_CURRENCY_MISMATCH',
        'variant.domestic',
        `must be the deal currency ${c.currency}`,
        context.variant.domestic,
      );
    for (const t of c.gridTimes) context.indexOf(t, `deal ${c.name} date t = ${t}`);
    return makeDealEvaluator(c, { ...d.options, fxNames });
  });
}

/** Every time (years) the deals observe or pay: the grid must contain them. */
export function eventTimes(description: unknown): number[] {
  return [...new Set(deals(description).deals.flatMap((c) => c.gridTimes))].sort((a, b) => a - b);
}

/** Absolute URL of this module, for `RunSpec.payoff.factory` in any bundler or runtime that resolves URLs. */
export function dealPayoffFactoryUrl(): string {
  return new URL('./dealPayoffFactory.ts', import.meta.url).href;
}
