/**
 * Resolution of a payoff factory specifier inside whichever process runs the batches.
 */
import { EngineError } from '../errors.ts';
import { BUILTIN_TEST_PAYOFFS, type PayoffFactory } from './runSpec.ts';
import { testPayoffFactory } from './testPayoffs.ts';

/** Loads a factory: the built-in test payoffs, or a module (by URL or package specifier) exporting `createEvaluators`. */
export async function loadPayoffFactory(specifier: string): Promise<PayoffFactory> {
  if (specifier === BUILTIN_TEST_PAYOFFS) return testPayoffFactory;
  let mod: Partial<PayoffFactory>;
  try {
    mod = (await import(/* @vite-ignore */ specifier)) as Partial<PayoffFactory>;
  } catch (e) {
    throw new EngineError(
      'E_PAYOFF_FACTORY',
      `payoff.factory ${JSON.stringify(specifier)} could not be loaded: ${(e as Error).message}`,
    );
  }
  if (typeof mod.createEvaluators !== 'function')
    throw new EngineError(
      'E_PAYOFF_FACTORY',
      `payoff.factory ${JSON.stringify(specifier)} must export createEvaluators(description, context)`,
    );
  return mod as PayoffFactory;
}
