/**
 * Step-halving check on the same random numbers: every variant is simulated on the study grid and on the grid with
 * every step cut in two. The fine grid draws its own normals; the coarse step k reuses the sum of the two fine
 * normals of its halves, Z_k = (Z_2k + Z_2k+1)/√2 (the coarse Brownian increment is exactly the sum of the fine
 * ones; Glasserman 2004, Monte Carlo Methods in Financial Engineering, Sec. 3.1 on Brownian refinement). For the
 * exact Hull–White steps the two completion normals are combined the same way: a valid draw of the coarse step,
 * coupled (not identical) to the fine one. The change of each Δ between the two grids, on paired paths, is the
 * discretisation part of the error budget. Runs in process; deterministic for a given seed.
 */
import type { CompiledDeal } from '../deal/types.ts';
import { makeDealEvaluator } from '../deal/dealEvaluator.ts';
import { batchSeed, makeNormalSource, makeUniformStream } from '../random/index.ts';
import { makeDriverLayout } from '../simulation/drivers.ts';
import { modelBreakTimes, prepareVariant } from '../simulation/pathGenerator.ts';
import { findTime, makeTimeGrid, type TimeGrid } from '../simulation/timeGrid.ts';
import { batchSums, emptySums, mergeSums, type MomentSums } from '../simulation/momentSums.ts';
import type { PathEvaluator, PathShift, VariantSpec } from '../simulation/types.ts';
import { shiftBatch } from '../simulation/shiftBatch.ts';
import { EngineError } from '../errors.ts';

const now = () => (typeof performance !== 'undefined' ? performance.now() : Date.now());

function gridOf(times: number[], events: number[]): TimeGrid {
  const t = Float64Array.from(times);
  const indexOf = (x: number, field = 'time') => {
    const i = findTime(t, x);
    if (i < 0) throw new EngineError('E_NOT_ON_GRID', `${field} ${x} is not on the simulation grid`);
    return i;
  };
  return { times: t, eventIndex: events.map((e) => indexOf(e)), indexOf };
}

/**
 * Result: sums over columns [coarse, then fine] × [variant 0..V−1] × [scenario 0..S−1], i.e. column
 * g·V·S + v·S + s (with one scenario, [coarse variant 0..V−1, fine variant 0..V−1]), and the time split of the run.
 */
export interface StepHalvingRun {
  sums: MomentSums;
  paths: number;
  /** Seconds spent generating paths and evaluating the payoff (for the cost split). */
  pathSeconds: number;
  payoffSeconds: number;
  /** Path-generation seconds per variant (coarse and fine grids together). */
  variantSeconds: number[];
}

/** Runs the check on `paths` paths (in batches of `batchSize`) for the given variants. */
export async function runStepHalving(args: {
  variants: VariantSpec[];
  deal: CompiledDeal;
  eventTimes: number[];
  maxStep: number;
  seed: string | number;
  paths: number;
  batchSize: number;
  signal?: AbortSignal;
  onBatch?: (done: number, total: number) => void;
  /** Evaluator per variant (e.g. with a fitted exercise policy); default: the deal without exercise rights. */
  evaluators?: PathEvaluator[];
  /**
   * Path shifts evaluated on every variant's paths of both grids, in the main run's order (default: the base paths
   * only), so hedge ratios by bump and revalue get the same discretisation check as the price.
   */
  scenarios?: PathShift[];
}): Promise<StepHalvingRun> {
  const { variants, deal } = args;
  const coarse = makeTimeGrid(args.eventTimes, args.maxStep, modelBreakTimes(variants));
  const fineTimes: number[] = [0];
  for (let k = 1; k < coarse.times.length; k++) {
    fineTimes.push(0.5 * (coarse.times[k - 1]! + coarse.times[k]!), coarse.times[k]!);
  }
  const fine = gridOf(fineTimes, args.eventTimes);
  const layout = makeDriverLayout(variants);
  const w = layout.width;
  const pc = variants.map((v) => prepareVariant(v, coarse, layout));
  const pf = variants.map((v) => prepareVariant(v, fine, layout));
  const plain = makeDealEvaluator(deal);
  const evOf = (vi: number): PathEvaluator => args.evaluators?.[vi] ?? plain;
  const nc = coarse.times.length - 1;
  const scenarios = args.scenarios ?? [{}];
  let sums = emptySums(2 * variants.length * scenarios.length);
  let pathSeconds = 0;
  let payoffSeconds = 0;
  const variantSeconds = variants.map(() => 0);
  const batches = Math.ceil(args.paths / args.batchSize);
  for (let b = 0; b < batches; b++) {
    if (args.signal?.aborted) throw new EngineError('E_CANCELLED', 'the study was cancelled');
    const n = Math.min(args.batchSize, args.paths - b * args.batchSize);
    const src = makeNormalSource(makeUniformStream(batchSeed(`${args.seed}/step-halving`, b)));
    const zf = new Float64Array(2 * nc * w * n);
    for (let k = 0; k < 2 * nc; k++) for (let s = 0; s < w; s++) src.fill(zf, (k * w + s) * n, n);
    const zc = new Float64Array(nc * w * n);
    const r2 = Math.SQRT1_2;
    for (let k = 0; k < nc; k++)
      for (let s = 0; s < w; s++) {
        const o = (k * w + s) * n;
        const o1 = (2 * k * w + s) * n;
        const o2 = ((2 * k + 1) * w + s) * n;
        for (let p = 0; p < n; p++) zc[o + p] = (zf[o1 + p]! + zf[o2 + p]!) * r2;
      }
    const cols: Float64Array[] = [];
    for (const [prep, z] of [
      [pc, zc],
      [pf, zf],
    ] as const)
      prep.forEach((pv, vi) => {
        const t0 = now();
        const batch = pv.simulate(z, n);
        const t1 = now();
        for (const sc of scenarios) cols.push(evOf(vi)(shiftBatch(batch, sc, pv.variant)));
        const t2 = now();
        pathSeconds += (t1 - t0) / 1000;
        payoffSeconds += (t2 - t1) / 1000;
        variantSeconds[vi]! += (t1 - t0) / 1000;
      });
    sums = mergeSums(sums, batchSums(cols, n));
    args.onBatch?.(b + 1, batches);
    await new Promise((r) => setTimeout(r, 0));
  }
  return { sums, paths: sums.count, pathSeconds, payoffSeconds, variantSeconds };
}
