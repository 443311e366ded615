/**
 * The message protocol between a runner and a worker that computes batches (worker_threads or Web Worker).
 * Messages are plain, structured-cloneable data; a worker caches the prepared run per `runId`.
 */
import { toPlainError, type PlainError } from '../errors.ts';
import type { RunSpec } from './runSpec.ts';
import { makeBatchContext, simulateBatch, type BatchContext, type BatchResult } from './batch.ts';
import { loadPayoffFactory } from './payoffFactories.ts';

export type ToWorker =
  { type: 'batch'; runId: number; spec?: RunSpec; index: number } | { type: 'forget'; runId: number };

export type FromWorker =
  | { type: 'batch'; runId: number; index: number; result: BatchResult }
  | { type: 'error'; runId: number; index: number; error: PlainError };

/** Handles messages in a worker; `post` sends replies. The spec travels with the first batch of each run. */
export function makeBatchServer(post: (msg: FromWorker) => void): (msg: ToWorker) => Promise<void> {
  const runs = new Map<number, Promise<BatchContext>>();
  return async (msg) => {
    if (msg.type === 'forget') {
      runs.delete(msg.runId);
      return;
    }
    try {
      let ctx = runs.get(msg.runId);
      if (!ctx) {
        if (!msg.spec) throw new Error(`run ${msg.runId} is unknown to this worker`);
        const spec = msg.spec;
        ctx = loadPayoffFactory(spec.payoff.factory).then((f) => makeBatchContext(spec, f));
        runs.set(msg.runId, ctx);
      }
      const result = simulateBatch(await ctx, msg.index);
      post({ type: 'batch', runId: msg.runId, index: msg.index, result });
    } catch (e) {
      post({ type: 'error', runId: msg.runId, index: msg.index, error: toPlainError(e) });
    }
  };
}
