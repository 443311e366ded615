/**
 * The dual bound's inner paths: branching from the outer path's state (history copied, only the later steps
 * simulated) estimates the same duality gap as replaying the outer path's normals; more inner paths near the
 * exercise boundary lower the gap where inner noise inflates it (many exercise dates); the study's dual does not
 * depend on the number of workers.
 */
import { describe, it, expect } from 'vitest';
import { readFileSync } from 'node:fs';
import { compileDeal } from '../../../src/engine/deal/compileDeal.ts';
import {
  dealExerciseSource,
  equallySpacedTimes,
  estimateDualGap,
  exerciseSeeds,
  fitExercisePolicy,
  lognormalBermudanSource,
  priceExerciseRight,
  regressionSample,
  type DualGap,
  type ExercisePolicy,
  type ExerciseSource,
} from '../../../src/engine/exercise/index.ts';
import type { VariantSpec } from '../../../src/engine/simulation/types.ts';
import { runStudy, DEFAULT_SETTINGS } from '../../../src/engine/study/study.ts';
import { studyInProcessExecutor } from '../../../src/engine/study/studyExecutor.ts';
import { makeNodeWorkerExecutor } from '../../../src/engine/simulation/runner.node.ts';
import type { MarketSnapshot } from '../../../src/engine/market/types.ts';

const full = process.env.FT_PROFILE === 'full';
const root = new URL('../../../', import.meta.url);
const read = (p: string) => JSON.parse(readFileSync(new URL(p, root), 'utf8')) as unknown;

function policyOf(source: ExerciseSource, seed: string, paths: number, degree = 2): ExercisePolicy {
  return fitExercisePolicy(source.right, regressionSample(source, { seed, regressionPaths: paths }), {
    seed,
    degree,
  }).policy;
}

function dual(
  source: ExerciseSource,
  policy: ExercisePolicy,
  seed: string,
  o: Partial<Parameters<typeof estimateDualGap>[2]> & { nOuter: number; nInner: number },
): DualGap {
  return estimateDualGap(source, policy, {
    outerSeed: exerciseSeeds.dualOuter(seed),
    innerSeed: (p, j) => exerciseSeeds.dualInner(seed, p, j),
    ...o,
  });
}

/** The callable note template's model: equity (Black–Scholes or Heston) with Hull–White rates (test parameters). */
function noteVariant(kind: 'bs' | 'heston'): VariantSpec {
  return {
    id: kind,
    label: kind,
    domestic: 'DOM',
    equities: [
      {
        name: 'ALDR',
        currency: 'DOM',
        spot: 4200,
        divYield: 0.02,
        dynamics:
          kind === 'bs'
            ? { kind: 'bs', volTimes: [30], vols: [0.2] }
            : { kind: 'heston', v0: 0.04, kappa: 1.5, theta: 0.04, sigma: 0.5, rho: -0.6 },
      },
    ],
    rates: {
      DOM: {
        curve: { currency: 'DOM', times: [1, 30], zeroRates: [0.03, 0.03] },
        hw: { a: 0.05, sigma: 0.01 },
      },
    },
    fx: [],
    correlation:
      kind === 'bs'
        ? {
            names: ['eq:ALDR', 'rate:DOM'],
            matrix: [
              [1, 0.2],
              [0.2, 1],
            ],
          }
        : {
            names: ['eq:ALDR', 'var:ALDR', 'rate:DOM'],
            matrix: [
              [1, -0.6, 0.2],
              [-0.6, 1, 0],
              [0.2, 0, 1],
            ],
          },
  };
}

describe('inner paths of the dual bound', () => {
  for (const kind of ['bs', 'heston'] as const) {
    it(`callable note under ${kind === 'bs' ? 'Black–Scholes' : 'Heston'} + Hull–White: branching inner paths give the replayed paths' gap within 3 combined SE`, () => {
      // Second method in the project: the replay start re-simulates the outer history from its normals; both
      // estimate the same conditional expectations (Andersen & Broadie 2004), so the gaps agree within noise.
      const compiled = compileDeal(read('samples/deals/callable-equity-linked-note.json'));
      const variant = noteVariant(kind);
      const branch = dealExerciseSource({ compiled, variant, maxStep: 0.25 });
      const replay = dealExerciseSource({ compiled, variant, maxStep: 0.25, innerStart: 'replay' });
      const policy = policyOf(branch, `note-${kind}`, full ? 20_000 : 4000);
      const o = { nOuter: full ? 400 : 80, nInner: full ? 128 : 48 };
      const b = dual(branch, policy, `note-${kind}`, o);
      const r = dual(replay, policy, `note-${kind}`, o);
      const tol = 3 * Math.sqrt(b.gapSe ** 2 + r.gapSe ** 2);
      const info = `branch ${b.gap} ± ${b.gapSe}, replay ${r.gap} ± ${r.gapSe}, tolerance ${tol}`;
      expect(b.innerRuns, info).toBe(r.innerRuns);
      expect(b.gap, info).toBeGreaterThanOrEqual(0);
      expect(Math.abs(b.gap - r.gap), info).toBeLessThanOrEqual(tol);
      // SE cap: the gap's error stays below 0.5 % of the 1,000,000 notional.
      expect(Math.max(b.gapSe, r.gapSe), info).toBeLessThan(5000);
    });
  }

  it('weekly Bermudan put (52 dates): more inner paths near the boundary give a smaller gap than the plain estimator on the same base inner paths', () => {
    // Longstaff & Schwartz (2001), Table 1 case S=36, K=40, r=0.06, σ=0.2, T=1 (from memory), here with weekly
    // exercise. The nested estimator's bias is upward and falls with inner-path noise (Andersen & Broadie 2004), so
    // on the same outer paths the refined estimator's gap is smaller; both stay ≥ 0 (the gap of a valid bound).
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 36,
      strike: 40,
      rate: 0.06,
      vol: 0.2,
      exerciseTimes: equallySpacedTimes(1, 52),
    });
    const policy = policyOf(src, 'weekly', full ? 50_000 : 10_000, 3);
    const nOuter = full ? 400 : 100;
    const plain = dual(src, policy, 'weekly', { nOuter, nInner: 64 });
    const refined = dual(src, policy, 'weekly', {
      nOuter,
      nInner: 64,
      nearBoundary: { width: 2, innerPaths: 256 },
    });
    const se = Math.sqrt(plain.gapSe ** 2 + refined.gapSe ** 2);
    const info = `plain ${plain.gap} ± ${plain.gapSe} (${plain.innerPaths} inner paths); refined ${refined.gap} ± ${refined.gapSe} (${refined.innerPaths} inner paths, ${refined.nearRuns} of ${refined.innerRuns} runs near the boundary)`;
    expect(refined.gap, info).toBeGreaterThanOrEqual(0);
    expect(plain.gap - refined.gap, `${info}; 3 combined SE ${3 * se}`).toBeGreaterThan(3 * se);
    expect(refined.nearRuns, info).toBeGreaterThan(0);
    expect(refined.nearRuns, info).toBeLessThan(refined.innerRuns);
    expect(refined.innerPaths, info).toBe(64 * refined.innerRuns + (256 - 64) * refined.nearRuns);
    expect(plain.gapSe, info).toBeLessThan(0.03);
  });

  it('priceExerciseRight passes the refinement on and reports how many inner runs it refined', () => {
    // Consistency of the two entry points: the same seed streams give the same gap through either.
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 36,
      strike: 40,
      rate: 0.06,
      vol: 0.2,
      exerciseTimes: equallySpacedTimes(1, 10),
    });
    const nearBoundary = { width: 2, innerPaths: 64 };
    const r = priceExerciseRight(src, {
      seed: 'pass-on',
      regressionPaths: 4000,
      pricingPaths: 2000,
      dual: { outerPaths: 40, innerPaths: 16, nearBoundary },
    });
    const d = r.estimate.dual!;
    const g = dual(src, r.policy, 'pass-on', { nOuter: 40, nInner: 16, nearBoundary });
    expect(d.gap).toBe(g.gap);
    expect(d.innerPaths).toBe(g.innerPaths);
    expect(d.nearBoundary).toEqual({ ...nearBoundary, runs: g.nearRuns, of: g.innerRuns });
    expect(g.nearRuns).toBeGreaterThan(0);
  });

  it('a bad refinement is refused with the field named', () => {
    const src = lognormalBermudanSource({
      type: 'put',
      spot: 36,
      strike: 40,
      rate: 0.06,
      vol: 0.2,
      exerciseTimes: [0.5, 1],
    });
    const policy = policyOf(src, 'bad', 500);
    expect(() =>
      dual(src, policy, 'bad', { nOuter: 4, nInner: 8, nearBoundary: { width: 0, innerPaths: 16 } }),
    ).toThrow(/nearBoundary\.width/);
    expect(() =>
      dual(src, policy, 'bad', { nOuter: 4, nInner: 8, nearBoundary: { width: 1, innerPaths: 4 } }),
    ).toThrow(/nearBoundary\.innerPaths/);
  });

  it('the study reports the same dual bound, bit for bit, with one and with two workers', async () => {
    // The dual pass runs in the study's own thread on its own seed streams (priceExerciseRight), so the worker
    // count must not change it (common practice for reproducible parallel Monte Carlo).
    const deal = read('samples/deals/callable-equity-linked-note.json');
    const market = read('samples/market/demo-market.json') as MarketSnapshot;
    const settings = {
      ...DEFAULT_SETTINGS,
      paths: 4096,
      firstPaths: 2048,
      batchSize: 2048,
      greeks: null,
      sweeps: null,
      localVol: false,
      auxiliaryFraction: 0.25,
    };
    const input = { deal: deal as never, markets: [market], settings };
    const one = await runStudy(input, { workers: 1, makeExecutor: () => studyInProcessExecutor() });
    const two = await runStudy(input, { workers: 2, makeExecutor: (w) => makeNodeWorkerExecutor(w) });
    const duals = (s: typeof one) =>
      s.ladder
        .filter((v) => v.exercise)
        .map((v) => ({ id: v.id, dual: v.exercise!.dual, primal: v.exercise!.primal }));
    const a = duals(one);
    expect(a.length).toBeGreaterThan(0);
    for (const d of a) expect(d.dual, d.id).not.toBeNull();
    expect(JSON.stringify(duals(two))).toBe(JSON.stringify(a));
  }, 120_000);
});
