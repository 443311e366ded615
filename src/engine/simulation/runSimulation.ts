/**
 * The runner: one interface over any executor of batches (in process, worker threads, Web Workers). Batches are
 * dispatched ahead, merged strictly in batch order, and the stopping rules (path budget, target standard error,
 * cancellation) are checked after each merged batch, so the result is the same for any number of workers.
 */
import type { FieldIssue } from '../errors.ts';
import { EngineError, fail } from '../errors.ts';
import { batchCount, validateRunSpec, type ColumnLabel, type RunSpec } from './runSpec.ts';
import { columnStats, controlVariate, emptySums, mergeSums, type MomentSums } from './momentSums.ts';
import { makeBatchContext, simulateBatch, type BatchContext, type BatchResult } from './batch.ts';
import { loadPayoffFactory } from './payoffFactories.ts';
import type { PrepareOptions } from './pathGenerator.ts';

/** Runs batches of a spec somewhere. `concurrency` batches may be in flight at once. */
export interface BatchExecutor {
  readonly concurrency: number;
  execute(spec: RunSpec, index: number): Promise<BatchResult>;
  /** Releases workers. */
  close(): Promise<void>;
}

/** Progress after each merged batch. */
export interface RunProgress {
  batchesDone: number;
  pathsDone: number;
  /** pathsDone / maxPaths. */
  fraction: number;
  /** Largest standard error over the watched columns so far. */
  maxSe: number;
}

export interface RunOptions {
  signal?: AbortSignal;
  onProgress?: (p: RunProgress) => void;
}

/** Why a run stopped. */
export type StopReason = 'budget' | 'target-se' | 'cancelled';

/** Result of a run: plain data (the sums) plus labels. */
export interface RunResult {
  sums: MomentSums;
  columns: ColumnLabel[];
  shape: { variants: number; scenarios: number; outputs: number };
  /** Paths simulated (with antithetic pairs, twice the sample count `sums.count`). */
  paths: number;
  batches: number;
  /** True when cancelled before the path budget or target was reached. */
  partial: boolean;
  stopReason: StopReason;
  warnings: FieldIssue[];
  /** Control-variate estimates, one per (control, variant), base scenario. */
  controlled: { variant: string; target: number; control: number; mean: number; se: number; beta: number }[];
  elapsedMs: number;
}

/** Column references of the stopping rule and the controls must exist (checked once the column count is known). */
function checkColumns(spec: RunSpec, columns: number, outputs: number): void {
  (spec.targetSe?.columns ?? []).forEach((c, i) => {
    if (!(Number.isInteger(c) && c >= 0 && c < columns))
      fail('E_BAD_COLUMN', `targetSe.columns[${i}]`, `must be a column index 0..${columns - 1}`, c);
  });
  (spec.controls ?? []).forEach((c, i) => {
    for (const key of ['target', 'control'] as const)
      if (!(Number.isInteger(c[key]) && c[key] >= 0 && c[key] < outputs))
        fail(
          'E_BAD_OUTPUT',
          `controls[${i}].${key}`,
          `must be a payoff output index 0..${outputs - 1}`,
          c[key],
        );
  });
}

/** Runs a spec with an executor, merging in batch order. */
export async function runSimulation(
  spec: RunSpec,
  executor: BatchExecutor,
  options: RunOptions = {},
): Promise<RunResult> {
  validateRunSpec(spec);
  const t0 = performance.now();
  const total = batchCount(spec);
  const signal = options.signal;
  const inflight = new Map<number, Promise<void>>();
  const done = new Map<number, BatchResult>();
  let failure: unknown;
  let next = 0;
  let merged = 0;
  let pathsDone = 0;
  let sums: MomentSums | undefined;
  let outputs = 0;
  let warnings: FieldIssue[] = [];
  let stopReason: StopReason = 'budget';
  let stop = false;
  let wake: () => void = () => {};
  const onAbort = () => wake();
  signal?.addEventListener('abort', onAbort);
  const maxSe = () => {
    if (!sums || sums.count < 2) return Infinity;
    const st = columnStats(sums);
    const cols = spec.targetSe?.columns ?? [...Array(st.columns).keys()];
    return Math.max(...cols.map((c) => st.se(c)));
  };
  try {
    while (!stop && merged < total) {
      if (signal?.aborted) {
        stopReason = 'cancelled';
        break;
      }
      while (next < total && inflight.size < executor.concurrency) {
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
      await new Promise<void>((resolve) => {
        wake = resolve;
        for (const p of inflight.values()) void p.then(resolve);
        if (inflight.size === 0) resolve();
      });
      if (failure) throw failure;
      while (done.has(merged)) {
        const r = done.get(merged)!;
        done.delete(merged);
        if (!sums) {
          sums = emptySums(r.sums.mean.length);
          outputs = r.outputs;
          warnings = r.warnings;
          checkColumns(spec, r.sums.mean.length, outputs);
        }
        sums = mergeSums(sums, r.sums);
        pathsDone += r.paths;
        merged++;
        const se = maxSe();
        options.onProgress?.({
          batchesDone: merged,
          pathsDone: sums.count,
          fraction: sums.count / spec.maxPaths,
          maxSe: se,
        });
        if (spec.targetSe && merged >= 2 && se <= spec.targetSe.se) {
          stopReason = 'target-se';
          stop = true;
          break;
        }
        if (signal?.aborted) {
          stopReason = 'cancelled';
          stop = true;
          break;
        }
      }
    }
  } finally {
    signal?.removeEventListener('abort', onAbort);
  }
  // Batches still in flight are not awaited: their results are discarded (their promises already have handlers),
  // so a cancellation or a met target returns at once.
  const scenarios = (spec.scenarios ?? [{}]).length;
  const k = spec.variants.length * scenarios * outputs;
  const finalSums = sums ?? emptySums(k);
  const columns: ColumnLabel[] = [];
  for (const v of spec.variants)
    for (let s = 0; s < scenarios; s++)
      for (let o = 0; o < outputs; o++) columns.push({ variant: v.id, scenario: s, output: o });
  const controlled: RunResult['controlled'] = [];
  for (const c of spec.controls ?? [])
    spec.variants.forEach((v, vi) => {
      const known = c.known[v.id];
      if (known === undefined || finalSums.count < 2) return;
      const base = vi * scenarios * outputs;
      const r = controlVariate(finalSums, base + c.target, base + c.control, known);
      controlled.push({ variant: v.id, target: c.target, control: c.control, ...r });
    });
  return {
    sums: finalSums,
    columns,
    shape: { variants: spec.variants.length, scenarios, outputs },
    paths: pathsDone,
    batches: merged,
    partial: stopReason === 'cancelled',
    stopReason,
    warnings,
    controlled,
    elapsedMs: performance.now() - t0,
  };
}

/**
 * An executor that runs batches in this thread, one at a time, yielding to the event loop between batches so a
 * cancellation is seen within one batch. Contexts (prepared variants, evaluators) are cached per spec object.
 */
export function inProcessExecutor(options: PrepareOptions = {}): BatchExecutor {
  const cache = new WeakMap<RunSpec, Promise<BatchContext>>();
  const contextOf = (spec: RunSpec) => {
    let c = cache.get(spec);
    if (!c) {
      c = loadPayoffFactory(spec.payoff.factory).then((f) => makeBatchContext(spec, f, options));
      cache.set(spec, c);
    }
    return c;
  };
  return {
    concurrency: 1,
    async execute(spec, index) {
      const ctx = await contextOf(spec);
      await new Promise((r) => setTimeout(r, 0));
      return simulateBatch(ctx, index);
    },
    close: async () => {},
  };
}

/** Convenience: statistics of a run result. */
export function resultStats(r: RunResult) {
  if (r.sums.count < 2)
    throw new EngineError('E_TOO_FEW_PATHS', `the run has ${r.sums.count} paths; statistics need at least 2`);
  return columnStats(r.sums);
}
