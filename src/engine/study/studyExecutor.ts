/**
 * The study's default batch executor: runs batches in this thread (a Node process, a browser tab or a Web Worker)
 * with the study's payoff factories bound statically, so no module is loaded by URL at run time (bundlers such as
 * Vite cannot resolve a `.ts` URL inside a built worker). Batches yield to the event loop between them, so a
 * cancellation is seen within one batch. Results equal any other executor's: the batch function is the same.
 */
import { EngineError } from '../errors.ts';
import { makeBatchContext, simulateBatch, type BatchContext } from '../simulation/batch.ts';
import type { BatchExecutor } from '../simulation/runSimulation.ts';
import type { PayoffFactory, RunSpec } from '../simulation/runSpec.ts';
import * as dealFactory from './studyDealFactory.ts';
import * as fairnessFactory from './fairnessPayoffFactory.ts';
import * as exerciseFactory from '../exercise/exercisePayoffFactory.ts';

const FACTORIES: Record<string, PayoffFactory> = {
  [dealFactory.studyDealFactoryUrl()]: dealFactory,
  [fairnessFactory.fairnessPayoffFactoryUrl()]: fairnessFactory,
  [exerciseFactory.exercisePayoffFactoryUrl()]: exerciseFactory,
};

/** An in-thread executor for the study's run specs. */
export function studyInProcessExecutor(): BatchExecutor {
  const cache = new WeakMap<RunSpec, BatchContext>();
  return {
    concurrency: 1,
    async execute(spec, index) {
      let ctx = cache.get(spec);
      if (!ctx) {
        const f = FACTORIES[spec.payoff.factory];
        if (!f)
          throw new EngineError(
            'E_PAYOFF_FACTORY',
            `payoff.factory ${spec.payoff.factory} is not a study factory`,
          );
        ctx = makeBatchContext(spec, f);
        cache.set(spec, ctx);
      }
      await new Promise((r) => setTimeout(r, 0));
      return simulateBatch(ctx, index);
    },
    close: async () => {},
  };
}
