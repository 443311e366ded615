/**
 * Drives the simulation runner's batches for a study and keeps the merged sums at each look of the doubling
 * schedule. Batches are dispatched ahead up to the executor's concurrency and merged strictly in batch order, so
 * every look's sums are identical for any number of workers.
 */
import { EngineError, fail, type FieldIssue } from '../errors.ts';
import type { BatchExecutor } from '../simulation/runSimulation.ts';
import { emptySums, mergeSums, type MomentSums } from '../simulation/momentSums.ts';
import type { BatchResult } from '../simulation/batch.ts';
import type { RunSpec } from '../simulation/runSpec.ts';

/** Sums at each look (same order as `lookPaths`), with the run's warnings and its wall time. */
export interface LookedRun {
  looks: MomentSums[];
  warnings: FieldIssue[];
  seconds: number;
}

/** Runs `spec` to its last look; `lookPaths` must be increasing multiples of the batch size. */
export async function runInLooks(args: {
  spec: RunSpec;
  executor: BatchExecutor;
  lookPaths: number[];
  signal?: AbortSignal;
  onBatch?: (done: number, total: number) => void;
}): Promise<LookedRun> {
  const t0 = typeof performance !== 'undefined' ? performance.now() : Date.now();
  const { spec, executor, lookPaths } = args;
  const size = spec.batchSize ?? 4096;
  lookPaths.forEach((p, i) => {
    if (p % size !== 0 && p !== spec.maxPaths)
      fail(
        'E_LOOK_BATCH',
        `settings.looks[${i}]`,
        `must be a multiple of the batch size ${size}`,
        p,
        'choose firstPaths and paths as multiples of batchSize',
      );
  });
  const total = Math.ceil(spec.maxPaths / size);
  const lookBatch = lookPaths.map((p) => Math.ceil(p / size));
  const done = new Map<number, BatchResult>();
  const inflight = new Map<number, Promise<void>>();
  let failure: unknown;
  let next = 0;
  let merged = 0;
  let sums: MomentSums | null = null;
  let warnings: FieldIssue[] = [];
  const looks: MomentSums[] = [];
  while (merged < total) {
    if (args.signal?.aborted) {
      await Promise.allSettled([...inflight.values()]);
      throw new EngineError('E_CANCELLED', 'the study was cancelled');
    }
    while (next < total && inflight.size < Math.max(1, executor.concurrency)) {
      const i = next++;
      inflight.set(
        i,
        executor.execute(spec, i).then(
          (r) => {
            done.set(i, r);
            inflight.delete(i);
          },
          (e) => {
            failure ??= e;
            inflight.delete(i);
          },
        ),
      );
    }
    if (inflight.size > 0) await Promise.race([...inflight.values()]);
    if (failure) {
      await Promise.allSettled([...inflight.values()]);
      throw failure;
    }
    while (done.has(merged)) {
      const r = done.get(merged)!;
      done.delete(merged);
      if (!sums) {
        sums = emptySums(r.sums.mean.length);
        warnings = r.warnings;
      }
      sums = mergeSums(sums, r.sums);
      merged++;
      if (lookBatch.includes(merged)) looks.push(sums);
      args.onBatch?.(merged, total);
    }
  }
  const t1 = typeof performance !== 'undefined' ? performance.now() : Date.now();
  return { looks, warnings, seconds: (t1 - t0) / 1000 };
}
