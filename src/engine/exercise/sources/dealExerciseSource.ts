/**
 * Exercise rights of a compiled deal under one model variant, as an {@link ExerciseSource}: paths from the
 * simulation engine's generator, cash flows, exercise values and regression features from the deal layer's
 * `evaluateDetailed`.
 *
 * Normals follow the simulation engine's per-driver layout ([step][slot][path], one stream per driver seeded by
 * `seed + ':' + driverName`, as its batchNormals), so two variants sharing the driver layout see the same random
 * numbers for the same seed: the exercise passes keep the pairing of common random numbers.
 *
 * Nested paths for the dual bound (`innerStart`):
 * - 'branch' (default): the inner paths of outer path p at exercise date j copy p's history up to t_j from the
 *   outer batch (bit for bit) and the generator simulates only the steps after t_j, from p's state there; fresh
 *   normals are drawn for those steps alone. Cost per (p, j): n_inner × (steps after t_j) generator steps.
 * - 'replay': the inner paths replay p's normals on every step up to t_j and draw fresh ones afterwards, so they
 *   re-simulate p's history n_inner times (the same history, the generator being a deterministic function of its
 *   normals). Kept as the reference the branching start is tested against.
 * Either way the deal is evaluated on the whole inner paths, which rebuilds every path-dependent quantity (running
 * averages, state variables, knock-outs) from the shared history; only the exercise dates and flows after t_j are
 * used. The two starts differ only in the last bits of the state recovered at t_j (see the generator's start
 * option) and in which fresh normals the inner paths draw, so they estimate the same continuation values.
 */
import { EngineError, fail } from '../../errors.ts';
import {
  evaluateDetailed,
  type DealEvaluatorOptions,
  type DetailedEvaluation,
} from '../../deal/dealEvaluator.ts';
import type { CompiledDeal } from '../../deal/types.ts';
import { makeNormalSource, makeUniformStream } from '../../random/index.ts';
import { driverWidth, makeDriverLayout, type DriverLayout } from '../../simulation/drivers.ts';
import {
  modelBreakTimes,
  normalsBlockSize,
  prepareVariant,
  type PrepareOptions,
  type PreparedVariant,
} from '../../simulation/pathGenerator.ts';
import { makeTimeGrid } from '../../simulation/timeGrid.ts';
import type { PathBatch, SimulationStart, VariantSpec } from '../../simulation/types.ts';
import type { ExerciseSource } from '../source.ts';
import type { ExerciseHolder, ExerciseRight, ExerciseSample } from '../types.ts';
import { exp } from '../../math/detMath.ts';

/** Inputs of {@link dealExerciseSource}. */
export interface DealExerciseSourceSpec {
  compiled: CompiledDeal;
  variant: VariantSpec;
  /** Variants whose drivers make up the shared normals layout (default: this variant alone). */
  layoutVariants?: VariantSpec[];
  /** Largest simulation step in years. */
  maxStep: number;
  evaluator?: DealEvaluatorOptions;
  prepare?: PrepareOptions;
  /** Antithetic pairs among the fresh normals of the inner paths of the dual bound (default true). */
  innerAntithetic?: boolean;
  /** How inner paths of the dual bound start (default 'branch'; see the module note). */
  innerStart?: 'branch' | 'replay';
}

/** Times (merged over rights, years) and holder of the deal's exercise rights; all must be held by one party. */
export function dealRightOf(compiled: CompiledDeal): { times: number[]; holder: ExerciseHolder } {
  if (compiled.exercise.length === 0)
    fail(
      'E_NO_EXERCISE',
      'deal.exercise',
      'must hold at least one exercise right to price early exercise',
      [],
    );
  const holders = new Set(compiled.exercise.map((x) => x.by));
  if (holders.size > 1)
    fail(
      'E_EXERCISE_MIXED',
      'deal.exercise',
      'must all be held by the same party (rights of both issuer and holder are not supported)',
      [...holders],
      'keep the issuer call or the holder put, not both',
    );
  const times = [...new Set(compiled.exercise.flatMap((x) => x.times))].sort((a, b) => a - b);
  return { times, holder: compiled.exercise[0]!.by };
}

/** What {@link dealExerciseSample} needs to know about the right. */
export interface DealRightLayout {
  times: number[];
  holder: ExerciseHolder;
  stateNames: string[];
  /** The deal's funding spread (continuous, per year), part of its discounting. */
  fundingSpread: number;
}

/**
 * Converts the deal layer's detailed evaluation of one batch into an exercise sample, keeping exercise dates
 * `from` … n−1 (and the flows after t_{from−1}). Deflators are the batch's numeraire discount at each exercise
 * date times the funding discount e^{−s t}, the same discounting the deal applies to its flows.
 */
export function dealExerciseSample(
  det: DetailedEvaluation,
  batch: PathBatch,
  right: DealRightLayout,
  from = 0,
): ExerciseSample {
  const { times, holder, fundingSpread: funding } = right;
  const n = times.length;
  const tol = 1e-10;
  const segmentOf = (t: number): number => {
    for (let j = 0; j < n; j++) if (t <= times[j]! + tol) return j;
    return n;
  };
  const P = det.nPaths;
  const names = right.stateNames;
  const nd = n - from;
  const state = new Float64Array(nd * names.length * P);
  const exerciseValue = new Float64Array(nd * P);
  const deflator = new Float64Array(nd * P);
  const alive = new Uint8Array(nd * P);
  // Columns of several rights on the same date are merged: a path may exercise any of them (the best for the
  // holder, the cheapest for the issuer); their alive flags agree.
  const best = holder === 'holder' ? Math.max : Math.min;
  const seen = new Uint8Array(n);
  for (const col of det.exercise) {
    const j = times.findIndex((t) => Math.abs(t - col.time) <= tol);
    if (j < from) continue;
    const k = j - from;
    for (let p = 0; p < P; p++) {
      const v = col.value[p]!;
      exerciseValue[k * P + p] = seen[j] ? best(exerciseValue[k * P + p]!, v) : v;
      alive[k * P + p] = col.alive[p]! > 0 ? 1 : 0;
    }
    if (!seen[j]) {
      names.forEach((name, v) => {
        const f = col.features[name];
        if (!f)
          throw new EngineError(
            'E_EXERCISE_FEATURES',
            `the deal's exercise date ${col.time} lacks the regression variable ${name}`,
          );
        state.set(f, (k * names.length + v) * P);
      });
      const off = col.step * P;
      const fund = exp(-funding * times[j]!);
      for (let p = 0; p < P; p++) deflator[k * P + p] = batch.discount[off + p]! * fund;
    }
    seen[j] = 1;
  }
  const segments = new Float64Array((nd + 1) * P);
  for (const flow of det.flows) {
    const s = segmentOf(flow.time) - from;
    if (s < 0) continue;
    const off = s * P;
    for (let p = 0; p < P; p++) segments[off + p] = segments[off + p]! + flow.values[p]!;
  }
  return { nPaths: P, nDates: nd, nState: names.length, state, exerciseValue, segments, deflator, alive };
}

/** Builds the exercise source of a compiled deal under one variant. */
export function dealExerciseSource(spec: DealExerciseSourceSpec): ExerciseSource & {
  /** The prepared variant and the grid (for benchmarks and diagnostics). */
  readonly prepared: PreparedVariant;
  /** The paths `sample(nPaths, seed)` evaluates, for pricing the deal without its exercise rights on them. */
  paths(nPaths: number, seed: string): PathBatch;
} {
  const { compiled, variant } = spec;
  const { times, holder } = dealRightOf(compiled);
  const layoutVariants = spec.layoutVariants ?? [variant];
  const layout: DriverLayout = makeDriverLayout(layoutVariants);
  const grid = makeTimeGrid([...compiled.gridTimes, ...times], spec.maxStep, modelBreakTimes(layoutVariants));
  const prepared = prepareVariant(variant, grid, layout, spec.prepare ?? {});
  const nSteps = grid.times.length - 1;
  const steps = times.map((t, j) => grid.indexOf(t, `deal.exercise.times[${j}]`));
  const funding = compiled.fundingSpread ?? 0;
  // Feature names from a probe evaluation on one path: they depend on the deal and the variant only.
  let stateNames: string[] | undefined;
  /** Normals of steps `fromStep` … nSteps−1 (block layout of the generator's start option). */
  const normalsFor = (seed: string, nPaths: number, antithetic = false, fromStep = 0): Float64Array => {
    const w = layout.width;
    const out = new Float64Array(normalsBlockSize(grid, layout, nPaths, fromStep));
    layout.names.forEach((name, d) => {
      const src = makeNormalSource(makeUniformStream(`${seed}:${name}`), { antithetic });
      const s0 = layout.slot[d]!;
      const width = driverWidth(name);
      for (let k = fromStep; k < nSteps; k++)
        for (let s = s0; s < s0 + width; s++) src.fill(out, ((k - fromStep) * w + s) * nPaths, nPaths);
    });
    return out;
  };
  const branch = spec.innerStart !== 'replay';

  const toSample = (det: DetailedEvaluation, batch: PathBatch, from: number): ExerciseSample =>
    dealExerciseSample(det, batch, { times, holder, stateNames: stateNames!, fundingSpread: funding }, from);

  function evaluate(
    normals: Float64Array,
    nPaths: number,
    start?: SimulationStart,
  ): { det: DetailedEvaluation; batch: PathBatch } {
    const batch = prepared.simulate(normals, nPaths, start);
    const det = evaluateDetailed(compiled, batch, spec.evaluator ?? {});
    if (!stateNames) {
      const first = det.exercise[0];
      stateNames = first ? Object.keys(first.features).sort() : [];
    }
    return { det, batch };
  }

  // Probe once so that `right.stateNames` is known before the first pass.
  evaluate(normalsFor('probe', 1), 1);
  const right: ExerciseRight = {
    times,
    holder,
    stateNames: stateNames!,
    inTheMoneyOnly: holder === 'holder',
  };
  // What continueFrom needs of an outer sample: its paths (branch) or its normals (replay).
  const outerBatches = new WeakMap<ExerciseSample, PathBatch>();
  const outerNormals = new WeakMap<ExerciseSample, Float64Array>();

  return {
    right,
    prepared,
    paths: (nPaths, seed) => prepared.simulate(normalsFor(seed, nPaths), nPaths),
    sample(nPaths, seed) {
      const normals = normalsFor(seed, nPaths);
      const { det, batch } = evaluate(normals, nPaths);
      const s = toSample(det, batch, 0);
      if (branch) outerBatches.set(s, batch);
      else outerNormals.set(s, normals);
      return s;
    },
    continueFrom(outer, j, p, nInner, seed) {
      const antithetic = spec.innerAntithetic !== false;
      const kj = steps[j]!;
      if (branch) {
        const from = outerBatches.get(outer);
        if (!from)
          throw new EngineError('E_INTERNAL', 'inner paths need an outer sample drawn by this source');
        const normals = normalsFor(seed, nInner, antithetic, kj);
        const { det, batch } = evaluate(normals, nInner, { from, path: p, step: kj });
        return toSample(det, batch, j + 1);
      }
      const on = outerNormals.get(outer);
      if (!on) throw new EngineError('E_INTERNAL', 'inner paths need an outer sample drawn by this source');
      const P = outer.nPaths;
      const w = layout.width;
      const normals = normalsFor(seed, nInner, antithetic);
      // Replay the outer path's normals on the steps up to t_j.
      for (let k = 0; k < kj; k++)
        for (let s = 0; s < w; s++)
          normals.fill(on[(k * w + s) * P + p]!, (k * w + s) * nInner, (k * w + s + 1) * nInner);
      const { det, batch } = evaluate(normals, nInner);
      return toSample(det, batch, j + 1);
    },
  };
}
