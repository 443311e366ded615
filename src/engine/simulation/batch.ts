/**
 * The batch function: (run spec, batch index) → mergeable sums. Pure: batch b draws only from the stream seeded by
 * batchSeed(run seed, b) and shares no mutable state with other batches, so any batch can be recomputed alone and
 * a distributed scheduler may run batches anywhere. Memory is bounded by the batch size, not the path count.
 */
import type { PathEvaluator } from './types.ts';
import type { FieldIssue } from '../errors.ts';
import { EngineError } from '../errors.ts';
import { batchSeed, makeNormalSource, makeUniformStream } from '../random/index.ts';
import {
  batchPaths,
  validateRunSpec,
  type ColumnLabel,
  type PayoffFactory,
  type RunSpec,
} from './runSpec.ts';
import { makeTimeGrid, type TimeGrid } from './timeGrid.ts';
import { driverWidth, makeDriverLayout, type DriverLayout } from './drivers.ts';
import {
  modelBreakTimes,
  prepareVariant,
  type PrepareOptions,
  type PreparedVariant,
} from './pathGenerator.ts';
import { shiftBatch } from './shiftBatch.ts';
import { batchSums, type MomentSums } from './momentSums.ts';

/** Everything a batch needs, prepared once per run (per worker). */
export interface BatchContext {
  readonly spec: RunSpec;
  readonly grid: TimeGrid;
  readonly layout: DriverLayout;
  readonly prepared: readonly PreparedVariant[];
  readonly evaluators: readonly (readonly PathEvaluator[])[];
  /** Outputs per (variant, scenario). */
  readonly outputs: number;
  readonly columns: readonly ColumnLabel[];
  readonly warnings: readonly FieldIssue[];
}

/** The result of one batch. */
export interface BatchResult {
  index: number;
  paths: number;
  /** Sums over samples: paths, or antithetic pairs (then `sums.count` = paths / 2). */
  sums: MomentSums;
  /** Outputs per (variant, scenario), for the column layout. */
  outputs: number;
  warnings: FieldIssue[];
}

/** Validates the spec, builds the grid (events, payoff times, model break times) and prepares every variant. */
export function makeBatchContext(
  spec: RunSpec,
  factory: PayoffFactory,
  options: PrepareOptions = {},
): BatchContext {
  validateRunSpec(spec);
  const payoffTimes = factory.eventTimes ? factory.eventTimes(spec.payoff.description) : [];
  const events = [...(spec.grid.eventTimes ?? []), ...payoffTimes];
  const grid = makeTimeGrid(events, spec.grid.maxStep, modelBreakTimes(spec.variants));
  const layout = makeDriverLayout(spec.variants);
  const prepared = spec.variants.map((v) => prepareVariant(v, grid, layout, options));
  const evaluators = spec.variants.map((v) =>
    factory.createEvaluators(spec.payoff.description, {
      variant: v,
      times: grid.times,
      indexOf: grid.indexOf,
    }),
  );
  const outputs = evaluators[0]!.length;
  evaluators.forEach((e, i) => {
    if (e.length !== outputs)
      throw new EngineError(
        'E_PAYOFF_OUTPUTS',
        `variant ${spec.variants[i]!.id} has ${e.length} payoff outputs, expected ${outputs}`,
      );
  });
  const scenarios = spec.scenarios ?? [{}];
  const columns: ColumnLabel[] = [];
  for (const v of spec.variants)
    for (let s = 0; s < scenarios.length; s++)
      for (let o = 0; o < outputs; o++) columns.push({ variant: v.id, scenario: s, output: o });
  return {
    spec,
    grid,
    layout,
    prepared,
    evaluators,
    outputs,
    columns,
    warnings: prepared.flatMap((p) => [...p.warnings]),
  };
}

/**
 * Draws batch `index`'s normals, layout [step][slot][path]. Each driver has its own stream, seeded by
 * `batchSeed(seed, index) + ':' + driverName`, filled step by step (all of a driver's slots per step), so a
 * variant's normals depend only on (seed, batch, its drivers): adding another variant to a run changes nothing for
 * the others.
 */
export function batchNormals(ctx: BatchContext, index: number, n: number): Float64Array {
  const nSteps = ctx.grid.times.length - 1;
  const w = ctx.layout.width;
  const out = new Float64Array(nSteps * w * n);
  const seed = batchSeed(ctx.spec.seed, index);
  const anti = ctx.spec.antithetic === true;
  ctx.layout.names.forEach((name, d) => {
    const src = makeNormalSource(makeUniformStream(`${seed}:${name}`), { antithetic: anti });
    const s0 = ctx.layout.slot[d]!;
    const width = driverWidth(name);
    for (let k = 0; k < nSteps; k++) for (let s = s0; s < s0 + width; s++) src.fill(out, (k * w + s) * n, n);
  });
  return out;
}

/** Simulates batch `index` under every variant on the same normals and returns its sums over all columns. */
export function simulateBatch(ctx: BatchContext, index: number): BatchResult {
  const n = batchPaths(ctx.spec, index);
  if (n <= 0)
    throw new EngineError('E_BATCH_INDEX', `batch ${index} is beyond the path budget ${ctx.spec.maxPaths}`);
  const normals = batchNormals(ctx, index, n);
  const scenarios = ctx.spec.scenarios ?? [{}];
  const cols: Float64Array[] = [];
  ctx.prepared.forEach((pv, vi) => {
    const base = pv.simulate(normals, n);
    for (const sc of scenarios) {
      const b = shiftBatch(base, sc, pv.variant);
      for (const ev of ctx.evaluators[vi]!) {
        const y = ev(b);
        if (y.length !== n)
          throw new EngineError(
            'E_PAYOFF_LENGTH',
            `a payoff evaluator returned ${y.length} values for ${n} paths`,
          );
        cols.push(y);
      }
    }
  });
  if (ctx.spec.antithetic) {
    // Antithetic pairs are one sample each: accumulate the pair means so standard errors count pairs, not paths.
    const h = n / 2;
    const pairs = cols.map((c) => {
      const out = new Float64Array(h);
      for (let p = 0; p < h; p++) out[p] = 0.5 * (c[p]! + c[p + h]!);
      return out;
    });
    return { index, paths: n, sums: batchSums(pairs, h), outputs: ctx.outputs, warnings: [...ctx.warnings] };
  }
  return { index, paths: n, sums: batchSums(cols, n), outputs: ctx.outputs, warnings: [...ctx.warnings] };
}
