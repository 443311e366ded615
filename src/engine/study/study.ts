/**
 * `runStudy`: the factor study end to end (DESIGN steps 3–9). Rules → calibrated ladder → step-halving check →
 * vega scenarios → main run in looks (common random numbers, leave-one-out Δ) → evidence of fairness (each variant
 * reprices its instruments; its error beyond noise enters the error budget) → sequential decision, joint test,
 * Shapley attribution, hedge-ratio tests → correlation sweeps → other snapshots → sealed file.
 * Pure engine code: batches run on whatever executor the caller supplies (in process by default).
 */
import { DEFAULT_SETTINGS } from './defaults.ts';
import { EngineError, fail } from '../errors.ts';
import { log } from '../math/detMath.ts';
import { compileDeal } from '../deal/compileDeal.ts';
import { analyseDeal } from '../deal/analyseDeal.ts';
import { studyDealFactoryUrl } from './studyDealFactory.ts';
import type { CompiledDeal, DealAnalysis } from '../deal/types.ts';
import { parseSnapshot } from '../market/snapshot.ts';
import { makeCurve } from '../market/curve.ts';
import type { MarketSnapshot } from '../market/types.ts';
import { isPsd } from '../math/linalg.ts';
import { bsPrice } from '../models/blackScholes.ts';
import { bsGreeks, bsImpliedVol } from '../models/blackScholes.ts';
import { bachelierImpliedVol } from '../models/bachelier.ts';
import { normPdf } from '../math/normal.ts';
import { gridVolAt } from '../calibration/volGrid.ts';
import { calibrateLocalVol } from '../calibration/localVolCalibration.ts';
import { equityForward } from '../calibration/volGrid.ts';
import type { BatchExecutor } from '../simulation/runSimulation.ts';
import { studyInProcessExecutor } from './studyExecutor.ts';
import { priceDealExercise } from '../exercise/priceDealExercise.ts';
import { makeExercisePathEvaluator } from '../exercise/exercisePathEvaluator.ts';
import {
  exercisePayoffFactoryUrl,
  type ExercisePayoffDescription,
} from '../exercise/exercisePayoffFactory.ts';
import type { ExercisePolicy } from '../exercise/types.ts';
import type { RunSpec } from '../simulation/runSpec.ts';
import { columnStats, type MomentSums } from '../simulation/momentSums.ts';
import type { PathShift, VariantSpec } from '../simulation/types.ts';
import {
  decideLook,
  decideSequential,
  jointTest,
  lookSchedule,
  thresholdAmount,
  type ErrorBudget,
  type FactorEstimate,
} from './decision.ts';
import { applyRules, FACTOR_LABELS, type FactorId } from './rules.ts';
import {
  calibrateLadder,
  calibrationExpiries,
  ladderFactors,
  studyLadderRequest,
  type CalibratedLadder,
} from './ladderCalibration.ts';
import { combination, type ColumnStats } from './stats.ts';
import { shapley } from './shapley.ts';
import { runInLooks } from './runInLooks.ts';
import { runStepHalving } from './stepHalving.ts';
import { fairnessPayoffFactoryUrl, type FairnessVanilla } from './fairnessPayoffFactory.ts';
import { sealStudy, settingsSchema } from './savedStudy.ts';
import { whatWouldDecide, type DecidingContext, type WhatWouldDecide } from './whatWouldDecide.ts';
import {
  STUDY_FORMAT,
  TOOL_NAME,
  type FactorVerdict,
  type LadderVariant,
  type GreekVerdict,
  type LocalVolStepCheck,
  type SavedStudy,
  type StudyInput,
  type StudyResults,
  type StudySettings,
  type Sweep,
  type SweepPoint,
  type ValueSe,
  type VariantRepricing,
} from './types.ts';

/** Label of a variance–rate sweep run under Euler by a QE study (saved with the sweep, shown by the report). */
export const EULER_SWEEP_NOTE = 'Euler, ρ(v,r) ≠ 0 needs it';

/** Version written into study files. */
export const TOOL_VERSION = '0.1.0';

/** Progress of a study. */
export interface StudyProgress {
  /** 0 … 1 over the whole study. */
  fraction: number;
  stage: string;
  detail?: string;
}

export interface RunStudyOptions {
  signal?: AbortSignal;
  onProgress?: (p: StudyProgress) => void;
  /** Worker count to ask of `makeExecutor` (recorded in the timings). Default 1. */
  workers?: number;
  /** Builds the batch executor (worker threads, Web Workers); default: in process. */
  makeExecutor?: (workers: number) => BatchExecutor;
}

const now = () => (typeof performance !== 'undefined' ? performance.now() : Date.now());

/**
 * Largest step of the local-vol diagnostic's grid (years): a week, or 1/200 of the deal's life when that is longer
 * (log-Euler reads σ at each step's start, so the smile needs many steps; 200 keeps long deals affordable).
 */
export function lvStep(lastTime: number): number {
  return Math.max(1 / 52, lastTime / 200);
}

function fmtStep(t: number): string {
  return `${Math.round(t * 365 * 10) / 10} days`;
}

export { DEFAULT_SETTINGS };

/** Validates settings, naming the first bad field. */
export function checkSettings(raw: unknown): StudySettings {
  const r = settingsSchema.safeParse(raw);
  if (!r.success) {
    const i = r.error.issues[0]!;
    const field = ['settings', ...i.path.map(String)].join('.');
    let value: unknown = raw;
    for (const k of i.path)
      value =
        value !== null && typeof value === 'object'
          ? (value as Record<PropertyKey, unknown>)[k as PropertyKey]
          : undefined;
    const rule = i.message
      .replace(/^Too small: expected number to be >0$/, 'must be > 0')
      .replace(/^Too small: expected number to be >=0$/, 'must be >= 0');
    fail('E_SETTINGS', field, rule, value, 'see `factor-triage study --help` for the settings');
  }
  const s = r.data as StudySettings;
  if (s.firstPaths > s.paths)
    fail('E_SETTINGS', 'settings.firstPaths', `must not exceed settings.paths (${s.paths})`, s.firstPaths);
  if (s.firstPaths % s.batchSize !== 0 || s.paths % s.batchSize !== 0)
    fail(
      'E_SETTINGS',
      'settings.batchSize',
      `must divide firstPaths (${s.firstPaths}) and paths (${s.paths})`,
      s.batchSize,
    );
  return s;
}

function toStats(s: MomentSums): ColumnStats {
  const k = s.mean.length;
  const cov: number[][] = [];
  for (let i = 0; i < k; i++) {
    const row: number[] = [];
    for (let j = 0; j < k; j++) row.push(s.count > 1 ? s.comoment[i * k + j]! / (s.count - 1) : 0);
    cov.push(row);
  }
  return { n: s.count, mean: Array.from(s.mean), cov };
}

function weights(k: number, w: Record<number, number>): Record<number, number> {
  const out: Record<number, number> = {};
  for (const [i, v] of Object.entries(w)) if (Number(i) < k) out[Number(i)] = (out[Number(i)] ?? 0) + v;
  return out;
}

interface Prepared {
  input: StudyInput;
  settings: StudySettings;
  markets: MarketSnapshot[];
  marketWarnings: string[];
  compiled: CompiledDeal;
  analysis: DealAnalysis;
  candidates: FactorId[];
  required: FactorId[];
  rules: ReturnType<typeof applyRules>;
  tau: number;
}

function prepare(input: StudyInput): Prepared {
  if (!input || typeof input !== 'object')
    fail('E_INPUT', 'input', 'must be an object with deal, markets and settings', input);
  const settings = checkSettings(input.settings);
  if (!Array.isArray(input.markets) || input.markets.length === 0)
    fail('E_NO_MARKET', 'markets', 'must hold at least one market snapshot', input.markets);
  const marketWarnings: string[] = [];
  const markets = input.markets.map((m, i) => {
    try {
      const r = parseSnapshot(m);
      marketWarnings.push(...r.warnings.map((w) => `market ${i}: ${w.message}`));
      return r.snapshot;
    } catch (e) {
      if (e instanceof EngineError) throw new EngineError(e.code, `markets[${i}]: ${e.message}`, e.issues);
      throw e;
    }
  });
  const compiled = compileDeal(input.deal);
  const analysis = analyseDeal(compiled);
  for (const e of analysis.equities)
    if (!markets[0]!.equities[e.marketName])
      fail(
        'E_UNKNOWN_UNDERLYING',
        `deal.underlyings.${e.id}`,
        `must name an equity of the market (it has ${Object.keys(markets[0]!.equities).join(', ') || 'none'})`,
        e.marketName,
        'add it to the market snapshot or correct the deal',
      );
  if (markets[0]!.domestic !== analysis.currency && !markets[0]!.curves[analysis.currency])
    fail(
      'E_NO_CURVE',
      `market.curves.${analysis.currency}`,
      'must give the curve of the deal currency',
      undefined,
    );
  const rules = applyRules(analysis, settings.rules);
  // The same choice `calibrate --deal` makes (one definition: ladderFactors).
  const { candidates, required } = ladderFactors(analysis, settings);
  const tau = thresholdAmount(settings.threshold, compiled.notional);
  return { input, settings, markets, marketWarnings, compiled, analysis, candidates, required, rules, tau };
}

/**
 * Vanillas repriced by Monte Carlo for the evidence of fairness: 3 strikes (0.9, 1, 1.1 × the forward) per calibration
 * expiry on the grid, plus the Black–Scholes calibration strike when the settings name one for the equity.
 * `bsTarget` marks the vanilla a Black–Scholes variant is fitted to at that expiry (the ATM forward by default).
 */
function fairnessVanillas(
  snapshot: MarketSnapshot,
  analysis: DealAnalysis,
  bsStrikes: Record<string, number>,
): (FairnessVanilla & { market: number; vol: number; bsTarget: boolean })[] {
  const out: (FairnessVanilla & { market: number; vol: number; bsTarget: boolean })[] = [];
  for (const e of analysis.equities) {
    const q = snapshot.equities[e.marketName]!;
    const curve = makeCurve(snapshot.curves[q.currency]!, `market.curves.${q.currency}`);
    const exps = calibrationExpiries(q.vols.expiries, analysis.lastTime).filter(
      (t) => t <= analysis.lastTime + 1e-9,
    );
    const target = bsStrikes[e.marketName];
    for (const T of exps.slice(-3)) {
      const F = equityForward(q, curve, T);
      const strikes = [0.9, 1, 1.1].map((m) => ({
        K: F * m,
        bsTarget: m === 1 && target === undefined,
      }));
      if (target !== undefined) strikes.push({ K: target, bsTarget: true });
      for (const { K, bsTarget } of strikes) {
        const vol = gridVolAt(q, curve, T, K);
        const isCall = K >= F;
        const r = -log(curve.df(T)) / T;
        const qq = r - log(F / q.spot) / T;
        const market = bsPrice({ type: isCall ? 'call' : 'put', S: q.spot, K, T, r, q: qq, vol });
        out.push({ equity: e.marketName, expiry: T, strike: K, isCall, market, vol, bsTarget });
      }
    }
  }
  return out;
}

/**
 * Largest analytic equity vol fit error of a variant over the quotes that expire by the deal's last date
 * (`lastTime`, years): the deal cannot depend on a vol quoted for a later expiry, which the ladder fits only to
 * bracket the deal's life (calibrationExpiries). Rows without an expiry (older files) or a deal shorter than every
 * quote fall back to every row, as the fit report's maxAbsVolError.
 */
function maxAbsVolErr(l: CalibratedLadder, mask: number, lastTime: number): number {
  const v = l.variants.find((x) => x.mask === mask);
  if (!v) return 0;
  const rows = v.calibration.fit.filter(
    (f) => f.mcError === null && f.expiry !== undefined && f.expiry <= lastTime + 1e-9,
  );
  if (rows.length === 0) return v.calibration.maxAbsVolError;
  return Math.max(...rows.map((f) => Math.abs(f.modelVol - f.marketVol)));
}

/** The analytic fit row behind {@link maxAbsVolErr}: the quote with the largest equity vol fit error; null if none. */
function largestFitRow(
  l: CalibratedLadder,
  mask: number,
  lastTime: number,
): { instrument: string; error: number } | null {
  const v = l.variants.find((x) => x.mask === mask);
  if (!v) return null;
  const analytic = v.calibration.fit.filter(
    (f) => f.mcError === null && !/^\S+ (caplet|swaption) /.test(f.instrument),
  );
  const inLife = analytic.filter((f) => f.expiry !== undefined && f.expiry <= lastTime + 1e-9);
  const rows = inLife.length ? inLife : analytic;
  let best: { instrument: string; error: number } | null = null;
  for (const f of rows) {
    const e = Math.abs(f.modelVol - f.marketVol);
    if (e > 0 && (!best || e > best.error)) best = { instrument: f.instrument, error: e };
  }
  return best;
}

/** Vol-space reading of one Monte Carlo reprice: the repriced vol, its SE and its error beyond two SE (decimal vols). */
interface VolError {
  vol: number;
  volSe: number;
  excess: number;
}

/**
 * A vanilla repriced by Monte Carlo at price `mc` ± `se`, in Black–Scholes implied vol: SE_σ = SE / vega at the
 * market vol (first-order delta method, common practice; vega ∂V/∂σ = S e^{−qT} φ(d₁) √T, Black & Scholes 1973),
 * excess = max(0, |σ_MC − σ_market| − 2·SE_σ). A price outside the no-arbitrage bounds has no implied vol; its error
 * is then read to first order as |mc − market| / vega.
 */
function vanillaVolError(
  snap: MarketSnapshot,
  q: FairnessVanilla & { market: number; vol: number },
  mc: number,
  se: number,
): VolError {
  const eqq = snap.equities[q.equity]!;
  const curve = makeCurve(snap.curves[eqq.currency]!, `market.curves.${eqq.currency}`);
  const r0 = -log(curve.df(q.expiry)) / q.expiry;
  const F = equityForward(eqq, curve, q.expiry);
  const qq = r0 - log(F / eqq.spot) / q.expiry;
  const type = q.isCall ? 'call' : 'put';
  const leg = { type, S: eqq.spot, K: q.strike, T: q.expiry, r: r0, q: qq } as const;
  const vega = Math.max(bsGreeks({ ...leg, vol: q.vol }).vega, 1e-300);
  const volSe = se / vega;
  let iv = Number.NaN;
  try {
    iv = bsImpliedVol({ ...leg, price: mc });
  } catch {
    iv = Number.NaN;
  }
  const ok = Number.isFinite(iv);
  const err = ok ? Math.abs(iv - q.vol) : Math.abs(mc - q.market) / vega;
  return { vol: ok ? iv : q.vol, volSe, excess: Math.max(0, err - 2 * volSe) };
}

/**
 * A caplet repriced by Monte Carlo, in normal (Bachelier) vol: price = τ P(0,T₂) · Bachelier(F, K, T₁, σ_N) with
 * F = (P(0,T₁)/P(0,T₂) − 1)/τ (Brigo & Mercurio 2006, Sec. 1.5; Bachelier 1900 in the form of Jäckel 2017, Sec. 1),
 * vega A √T₁ φ(d), d = (F − K)/(σ_N √T₁); SE and excess as for {@link vanillaVolError}.
 */
function capletVolError(
  snap: MarketSnapshot,
  q: { currency: string; expiry: number; tenor: number; strike: number; vol: number; market: number },
  mc: number,
  se: number,
): VolError {
  const curve = makeCurve(snap.curves[q.currency]!, `market.curves.${q.currency}`);
  const P2 = curve.df(q.expiry + q.tenor);
  const F = (curve.df(q.expiry) / P2 - 1) / q.tenor;
  const A = q.tenor * P2;
  const sq = Math.sqrt(q.expiry);
  const vega = Math.max(A * sq * normPdf((F - q.strike) / (q.vol * sq)), 1e-300);
  const volSe = se / vega;
  let iv = Number.NaN;
  try {
    iv = bachelierImpliedVol({ type: 'call', F, K: q.strike, T: q.expiry, annuity: A, price: mc });
  } catch {
    iv = Number.NaN;
  }
  const ok = Number.isFinite(iv);
  const err = ok ? Math.abs(iv - q.vol) : Math.abs(mc - q.market) / vega;
  return { vol: ok ? iv : q.vol, volSe, excess: Math.max(0, err - 2 * volSe) };
}

/**
 * Runs a factor study and returns the sealed study file (plain data).
 * Stages: rules → calibrated ladder (and vega-bumped, local-vol variants) → early-exercise policies when the deal has
 * rights → step-halving check → vega run → main run in looks (every variant × base, spot ±, rate ± scenarios) →
 * fairness repricing (feeds the repricing part of the budget) → sequential decision, joint test, Shapley shares,
 * hedge-ratio tests, what would decide each undecided factor → local-vol split with its step-halving check →
 * correlation sweeps (a QE study sweeps variance–rate pairs under Euler, with an Euler base point) → other snapshots.
 * All runs share the seed; amounts are in the deal currency.
 * `opts.makeExecutor(workers)` supplies the batch executor (worker threads in Node, Web Workers in a browser);
 * the default runs batches in this thread. Results are bit-identical for any executor and worker count.
 * Rejects with an EngineError naming the field for bad input, and with `E_CANCELLED` when `opts.signal` aborts.
 */
export async function runStudy(input: StudyInput, opts: RunStudyOptions = {}): Promise<SavedStudy> {
  const tStart = now();
  const P = prepare(input);
  const { settings: S, markets, compiled, analysis, candidates, required, tau } = P;
  const snap = markets[0]!;
  const warnings: string[] = [...P.marketWarnings];
  const limitations: string[] = [];
  const workers = Math.max(1, Math.floor(opts.workers ?? 1));
  const stages: Record<string, number> = {};
  let stageName = 'setup';
  let stageT = tStart;
  const progress = (fraction: number, stage: string, detail?: string) => {
    if (stage !== stageName) {
      const t = now();
      stages[stageName] = (stages[stageName] ?? 0) + (t - stageT) / 1000;
      stageName = stage;
      stageT = t;
    }
    opts.onProgress?.({ fraction: Math.min(1, Math.max(0, fraction)), stage, ...(detail ? { detail } : {}) });
  };
  const checkAbort = () => {
    if (opts.signal?.aborted) throw new EngineError('E_CANCELLED', 'the study was cancelled');
  };
  const k = candidates.length;
  const full = (1 << k) - 1;
  const aux = Math.max(S.batchSize, Math.round((S.paths * S.auxiliaryFraction) / S.batchSize) * S.batchSize);
  // The step-halving check runs in process on half the auxiliary paths (its pairing makes it precise).
  const stepPaths = Math.max(S.batchSize, Math.round(aux / 2 / S.batchSize) * S.batchSize);

  // --- calibration
  progress(0.01, 'calibration', 'fitting every variant to the same instruments');
  const tCal = now();
  // The request `calibrate --deal` makes too (one definition: studyLadderRequest).
  const ladderReq = studyLadderRequest({ snapshot: snap, analysis, candidates, required, settings: S });
  const ladder = calibrateLadder(ladderReq);
  warnings.push(...ladder.warnings);
  const variants = ladder.variants.map((v) => v.spec);
  // Local-volatility diagnostic (Dupire 1994 from an SVI surface, calibration layer), deterministic rates.
  let lvVariant: LadderVariant | null = null;
  const svBit = candidates.indexOf('stochVol');
  if (S.localVol && svBit >= 0) {
    const base = ladder.variants[0]!;
    const t0 = now();
    const lvWarnings: string[] = [];
    const lvFit = { rmse: [] as number[], max: 0 };
    const equities = base.spec.equities.map((e) => {
      const q = snap.equities[e.name]!;
      const lv = calibrateLocalVol({
        name: e.name,
        equity: q,
        curve: makeCurve(snap.curves[q.currency]!, `market.curves.${q.currency}`),
      });
      lvWarnings.push(...lv.warnings.map((w) => w.message));
      // Fit of the SVI surface the local vol is read from (vol points → decimal vol).
      const r = lv.surface.slices.map((x) => x.rmseVolPoints / 100);
      lvFit.rmse.push(...r);
      lvFit.max = Math.max(lvFit.max, lv.surface.maxAbsVolPoints / 100);
      return { ...e, dynamics: lv.dynamics };
    });
    lvVariant = {
      id: 'localvol',
      label: 'Local volatility (Dupire), deterministic rates — diagnostic',
      mask: 0,
      factors: [],
      role: 'localVol',
      spec: {
        ...base.spec,
        id: 'localvol',
        label: 'Local volatility (Dupire), deterministic rates',
        equities,
      },
      calibration: {
        characteristicFunction: 'none',
        rmseVol: Math.sqrt(lvFit.rmse.reduce((t, x) => t + x * x, 0) / Math.max(1, lvFit.rmse.length)),
        maxAbsVolError: lvFit.max,
        seconds: (now() - t0) / 1000,
        fit: [],
        warnings: lvWarnings,
        feller: {},
      },
    };
    warnings.push(...lvWarnings);
  }
  const allVariants = lvVariant ? [...ladder.variants, lvVariant] : ladder.variants;
  let vegaLadders: { up: CalibratedLadder; down: CalibratedLadder } | null = null;
  if (S.greeks && analysis.equities.length > 0) {
    const warm = ladder.heston;
    vegaLadders = {
      up: calibrateLadder({ ...ladderReq, volShift: S.greeks.volBump, warmStart: warm }),
      down: calibrateLadder({ ...ladderReq, volShift: -S.greeks.volBump, warmStart: warm }),
    };
  }
  const calSeconds = (now() - tCal) / 1000;
  checkAbort();

  const vanillas = fairnessVanillas(snap, analysis, S.calibrationStrikes);
  // Hull–White caplets fixing within the deal's life are repriced on the study's paths too.
  const caplets = Object.values(ladder.hullWhite)
    .flatMap((h) => h.caplets)
    .filter((c) => c.expiry <= analysis.lastTime + 1e-9);
  const eventTimes = [
    ...new Set([
      ...compiled.gridTimes,
      ...compiled.exercise.flatMap((e) => e.times),
      ...vanillas.map((v) => v.expiry),
      ...caplets.map((c) => c.expiry),
    ]),
  ].sort((a, b) => a - b);
  if (eventTimes.length === 0)
    fail('E_NO_DATES', 'deal.schedules', 'must give at least one date after the valuation date', undefined);
  const maxStep = Math.min(S.maxStep, Math.max(...eventTimes));
  const makeExec = opts.makeExecutor ?? (() => studyInProcessExecutor());
  const executor = makeExec(workers);
  let simSeconds = 0;
  try {
    // --- early exercise: a Longstaff–Schwartz policy per variant on its own regression paths, with the
    // Andersen–Broadie dual bound; the study's runs then price every variant with its policy on the common paths.
    const hasExercise = compiled.exercise.length > 0;
    const policies: Record<string, ExercisePolicy> = {};
    const gapOf: Record<string, number> = {};
    if (hasExercise) {
      const exVariants = [...variants, ...(lvVariant ? [lvVariant.spec] : [])];
      const outer = Math.min(1000, Math.max(64, Math.round(aux / 16)));
      exVariants.forEach((v, i) => {
        checkAbort();
        progress(0.02 + (0.03 * i) / exVariants.length, 'early exercise', v.label);
        const r = priceDealExercise({
          compiled,
          variant: v,
          layoutVariants: variants,
          maxStep,
          settings: {
            seed: S.seed,
            regressionPaths: aux,
            pricingPaths: S.batchSize,
            batchSize: S.batchSize,
            dual: { outerPaths: outer, innerPaths: 64 },
          },
        });
        policies[v.id] = r.policy;
        const d = r.estimate.dual;
        gapOf[v.id] = d ? d.gap + 2 * d.gapSe : 0;
        const lv = allVariants.find((x) => x.spec.id === v.id)!;
        lv.exercise = {
          policy: r.policy,
          primal: { value: r.estimate.primal.value, se: r.estimate.primal.se },
          dual: d
            ? { value: d.value, gap: d.gap, gapSe: d.gapSe, se: d.se, nOuter: d.nOuter, nInner: d.nInner }
            : null,
          exerciseProbability: r.estimate.exerciseProbability,
          neverExercised: r.estimate.neverExercised,
          biasNote: r.estimate.biasNote,
        };
      });
      // Bumped variants (vega) and swept variants keep the policy of the variant they come from (held fixed).
      for (const v of variants) {
        policies[`${v.id}/vol+`] = policies[v.id]!;
        policies[`${v.id}/vol-`] = policies[v.id]!;
      }
      limitations.push(
        `Exercise rights are exercised by a Longstaff–Schwartz policy fitted per variant on ${aux} regression paths (the study's paths price them); the Andersen–Broadie gap (${outer} outer × 64 inner paths) enters each factor's error budget. Hedge ratios and sweeps hold each policy fixed.`,
      );
    }

    // --- scenarios of the main run
    const dom = analysis.currency;
    const scenarios: PathShift[] = [{}];
    const eqNames = analysis.equities.map((e) => e.marketName);
    if (S.greeks) {
      const up: Record<string, number> = {};
      const dn: Record<string, number> = {};
      for (const n of eqNames) {
        up[n] = 1 + S.greeks.spotBump;
        dn[n] = 1 - S.greeks.spotBump;
      }
      if (eqNames.length) scenarios.push({ spotScale: up }, { spotScale: dn });
      scenarios.push(
        { rateShift: { [dom]: S.greeks.rateBump } },
        { rateShift: { [dom]: -S.greeks.rateBump } },
      );
    }
    const nSc = scenarios.length;
    const col = (mask: number, sc = 0) => mask * nSc + sc;

    // --- step halving (in process, same random numbers on both grids)
    progress(0.05, 'step halving', `${stepPaths} paths on the study grid and on the halved grid`);
    // Run to completion before the worker runs: overlapping it with them starves the workers, whose batches are
    // dispatched from this thread (measured in bench/study.bench.ts).
    const overlap = false;
    const shPromise = runStepHalving({
      variants,
      deal: compiled,
      eventTimes,
      maxStep,
      seed: S.seed,
      paths: stepPaths,
      batchSize: S.batchSize,
      signal: opts.signal,
      scenarios,
      ...(hasExercise
        ? { evaluators: variants.map((v) => makeExercisePathEvaluator(compiled, policies[v.id]!)) }
        : {}),
      ...(overlap
        ? {}
        : { onBatch: (d: number, t: number) => progress(0.05 + 0.1 * (d / t), 'step halving') }),
    });
    shPromise.catch(() => undefined); // a failure is reported where the result is awaited
    if (!overlap) await shPromise;
    let shStats: ColumnStats | null = null;
    const V = variants.length;
    // Weights are over the main run's columns col(mask, scenario); the step-halving run has the same columns on the
    // study grid, then again on the halved grid (offset V · nSc).
    const stepChange = (w: Record<number, number>): ValueSe => {
      const c: Record<number, number> = {};
      const f: Record<number, number> = {};
      for (const [i, x] of Object.entries(w)) {
        c[Number(i)] = -x;
        f[Number(i) + V * nSc] = x;
      }
      return combination(shStats!, { ...c, ...f });
    };
    const looFor = (fi: number) => full ^ (1 << fi);
    // Budget part: the change of Δ on the halved grid beyond two of its own standard errors (what the paired noise
    // of the check does not explain); the raw change and its SE are kept for the report.
    const stepBudget = (w: Record<number, number>): number => {
      const d = stepChange(w);
      return Math.max(0, Math.abs(d.value) - 2 * d.se);
    };
    const stepHalving: Record<string, number> = {};
    const stepHalvingRaw: Record<string, ValueSe> = {};

    const payoff = hasExercise
      ? {
          factory: exercisePayoffFactoryUrl(),
          description: { deals: [{ compiled, policies }] } satisfies ExercisePayoffDescription,
        }
      : { factory: studyDealFactoryUrl(), description: { deals: [compiled] } };

    // --- vega run (recalibrated variants, same grid and seed → same paths); only the richest variant and the
    // leave-one-out variants, which the vega tests and the calibration budget need
    const vegaMasks = [...new Set([full, ...candidates.map((_, fi) => full ^ (1 << fi))])];
    let vegaStats: ColumnStats | null = null;
    // Vega is a difference of two recalibrated variants on the same normals, precise on fewer paths: twice the
    // auxiliary share (half the paths by default), the first paths of the study.
    const vegaPaths = Math.min(S.paths, 2 * aux);
    if (vegaLadders) {
      limitations.push(
        `Vega runs on the first ${vegaPaths} paths (the recalibrated ±vol variants are paired on them).`,
      );
      progress(0.16, 'vega', 'recalibrated variants ±vol bump on the same paths');
      const spec: RunSpec = {
        variants: [
          ...vegaMasks.map((m) => ({
            ...vegaLadders!.up.variants[m]!.spec,
            id: `${vegaLadders!.up.variants[m]!.spec.id}/vol+`,
          })),
          ...vegaMasks.map((m) => ({
            ...vegaLadders!.down.variants[m]!.spec,
            id: `${vegaLadders!.down.variants[m]!.spec.id}/vol-`,
          })),
        ],
        payoff,
        grid: { eventTimes, maxStep },
        seed: S.seed,
        batchSize: S.batchSize,
        maxPaths: vegaPaths,
      };
      const r = await runInLooks({
        spec,
        executor,
        lookPaths: [vegaPaths],
        signal: opts.signal,
        onBatch: (d, t) => progress(0.16 + 0.14 * (d / t), 'vega'),
      });
      simSeconds += r.seconds;
      vegaStats = toStats(r.looks[0]!);
    }

    // --- main run in looks
    const schedule = lookSchedule({
      firstPaths: S.firstPaths,
      finalPaths: S.paths,
      alpha: S.alpha,
      spending: S.spending,
    });
    const mainSpec: RunSpec = {
      variants,
      scenarios,
      payoff,
      grid: { eventTimes, maxStep },
      seed: S.seed,
      batchSize: S.batchSize,
      maxPaths: S.paths,
    };
    progress(0.3, 'pricing', `${variants.length} variants × ${nSc} scenarios`);
    const main = await runInLooks({
      spec: mainSpec,
      executor,
      lookPaths: schedule.map((l) => l.paths),
      signal: opts.signal,
      onBatch: (d, t) => progress(0.3 + 0.4 * (d / t), 'pricing', `batch ${d}/${t}`),
    });
    simSeconds += main.seconds;
    warnings.push(...main.warnings.map((w) => w.message));
    const sh = await shPromise;
    shStats = toStats(sh.sums);
    candidates.forEach((f, fi) => {
      stepHalving[f] = stepBudget({ [col(full)]: 1, [col(looFor(fi))]: -1 });
      stepHalvingRaw[f] = stepChange({ [col(full)]: 1, [col(looFor(fi))]: -1 });
    });
    const lookStats = main.looks.map(toStats);
    const final = lookStats[lookStats.length - 1]!;
    const K = final.mean.length;

    // --- evidence of fairness, before the decisions: every ladder variant reprices its vanillas and caplets on the
    // first `aux` paths of the study's seed (batches merged in order, so identical for any worker count). Each
    // variant's implied-vol error beyond two of its own SE on its calibrated vanillas is the `repricing` part of the
    // budget: it catches a simulated model that misses its instruments by more than its analytic fit says.
    const repricing: Record<string, VariantRepricing> = {};
    const repricingVol: Record<number, number> = {};
    // A naive variant that adds stochastic rates keeps the deterministic-rate equity fit: its repricing error is the
    // miscalibration its Δ is meant to measure, so it is shown but not budgeted.
    const budgeted = (v: LadderVariant) =>
      S.calibration === 'fair' || v.factors.every((f) => f === 'stochVol');
    for (const v of ladder.variants) {
      repricing[v.id] = {
        volExcess: 0,
        instrument: null,
        quotes: 0,
        capletNormalVolExcess: null,
        inBudget: budgeted(v),
      };
      repricingVol[v.mask] = 0;
    }
    if (vanillas.length + caplets.length > 0) {
      progress(
        0.7,
        'fairness',
        `${vanillas.length} vanillas and ${caplets.length} caplets per variant on the study's paths`,
      );
      const nOut = vanillas.length + caplets.length;
      const spec: RunSpec = {
        variants,
        payoff: {
          factory: fairnessPayoffFactoryUrl(),
          description: { vanillas, caplets, gridTimes: eventTimes },
        },
        grid: { eventTimes, maxStep },
        seed: S.seed,
        batchSize: S.batchSize,
        maxPaths: aux,
      };
      const r = await runInLooks({ spec, executor, lookPaths: [aux], signal: opts.signal });
      simSeconds += r.seconds;
      const st = columnStats(r.looks[0]!);
      ladder.variants.forEach((v, vi) => {
        const rep = repricing[v.id]!;
        caplets.forEach((q, ci) => {
          if (!v.spec.rates[q.currency]?.hw) return;
          const c = vi * nOut + vanillas.length + ci;
          const mc = st.mean(c);
          const se = st.se(c);
          const m = capletVolError(snap, q, mc, se);
          rep.capletNormalVolExcess = Math.max(rep.capletNormalVolExcess ?? 0, m.excess);
          v.calibration.fit.push({
            instrument: `${q.currency} caplet ${q.expiry}y×${q.tenor}y K=${(q.strike * 100).toFixed(5)}% (Monte Carlo reprice)`,
            marketVol: q.vol,
            modelVol: m.vol,
            priceError: mc - q.market,
            mcError: { value: mc - q.market, se },
            calibrated: true,
            mcVolSe: m.volSe,
          });
        });
        const dyn = (name: string) => v.spec.equities.find((e) => e.name === name)?.dynamics.kind;
        vanillas.forEach((q, qi) => {
          const c = vi * nOut + qi;
          const mc = st.mean(c);
          const se = st.se(c);
          const m = vanillaVolError(snap, q, mc, se);
          // A Black–Scholes variant is fitted at one strike per expiry (the ATM forward unless the settings name
          // an absolute strike): only that vanilla is its own.
          const calibrated = dyn(q.equity) !== 'bs' || q.bsTarget;
          const instrument = `${q.equity} ${q.isCall ? 'call' : 'put'} K=${Math.round(q.strike * 100) / 100} T=${q.expiry} (Monte Carlo reprice)`;
          if (calibrated) {
            rep.quotes++;
            if (m.excess > rep.volExcess) {
              rep.volExcess = m.excess;
              rep.instrument = instrument;
            }
          }
          v.calibration.fit.push({
            instrument,
            marketVol: q.vol,
            modelVol: m.vol,
            priceError: mc - q.market,
            mcError: { value: mc - q.market, se },
            calibrated,
            mcVolSe: m.volSe,
          });
        });
        repricingVol[v.mask] = rep.inBudget ? rep.volExcess : 0;
      });
      if (caplets.length)
        limitations.push(
          'Caplets repriced on the study paths are judged in normal vol (shown per variant) but stay out of the error budget: the study has no deal sensitivity to rate vols to turn a rate-vol error into price.',
        );
    }

    // greeks of each ladder variant
    const h = S.greeks;
    const greekW = {
      delta: (m: number) =>
        h && eqNames.length
          ? weights(K, { [col(m, 1)]: 0.01 / (2 * h.spotBump), [col(m, 2)]: -0.01 / (2 * h.spotBump) })
          : null,
      rho: (m: number) => {
        if (!h) return null;
        const o = eqNames.length ? 3 : 1;
        return weights(K, {
          [col(m, o)]: 1e-4 / (2 * h.rateBump),
          [col(m, o + 1)]: -1e-4 / (2 * h.rateBump),
        });
      },
    };
    const vegaOf = (m: number): Record<number, number> | null => {
      const i = vegaMasks.indexOf(m);
      return vegaStats && h && i >= 0
        ? { [i]: 0.01 / (2 * h.volBump), [i + vegaMasks.length]: -0.01 / (2 * h.volBump) }
        : null;
    };
    // |deal vega| per unit of vol (richest variant), which turns a vol error into price for the calibration and
    // repricing parts (first order; common practice).
    const vegaPerUnit = ((): number | null => {
      const vw = vegaOf(full);
      return vw && vegaStats ? Math.abs(combination(vegaStats, vw).value) * 100 : null;
    })();
    const calBudget = (a: number, b: number): number =>
      vegaPerUnit === null
        ? 0
        : vegaPerUnit *
          (maxAbsVolErr(ladder, a, analysis.lastTime) + maxAbsVolErr(ladder, b, analysis.lastTime));
    const repBudget = (a: number, b: number): number =>
      vegaPerUnit === null ? 0 : vegaPerUnit * ((repricingVol[a] ?? 0) + (repricingVol[b] ?? 0));
    if (!vegaStats)
      limitations.push(
        'The error budget has no calibration-residual and no repricing part: hedge ratios (vega) were not computed, so vol errors cannot be turned into price.',
      );
    const gapFor = (a: number, b: number): number | null =>
      hasExercise ? (gapOf[variants[a]!.id] ?? 0) + (gapOf[variants[b]!.id] ?? 0) : null;

    const budgetFor = (fi: number): ErrorBudget => ({
      stepHalving: stepHalving[candidates[fi]!]!,
      calibration: calBudget(full, looFor(fi)),
      repricing: repBudget(full, looFor(fi)),
      exerciseGap: gapFor(full, looFor(fi)),
    });
    const budgetParts: Record<string, ErrorBudget> = Object.fromEntries(
      candidates.map((f, fi) => [f, budgetFor(fi)]),
    );
    const estimatesAt = (st: ColumnStats): FactorEstimate[] =>
      candidates.map((f, fi) => {
        const d = combination(st, { [col(full)]: 1, [col(looFor(fi))]: -1 });
        return { factor: f, delta: d.value, se: d.se, budget: budgetFor(fi) };
      });
    const seq = k > 0 ? decideSequential({ looks: lookStats.map(estimatesAt), schedule, tau }) : [];

    // what would decide each undecided factor: the largest part of its interval and what reduces it
    const variantOf = (mask: number) => ladder.variants.find((v) => v.mask === mask)!;
    const decideContext = (fi: number): DecidingContext => {
      const pair = [variantOf(full), variantOf(looFor(fi))];
      const fitRows = pair
        .map((v) => ({ v, row: largestFitRow(ladder, v.mask, analysis.lastTime) }))
        .filter((x) => x.row !== null)
        .sort((a, b) => b.row!.error - a.row!.error);
      const rep = pair
        .map((v) => ({ v, r: repricing[v.id]! }))
        .filter((x) => x.r.inBudget !== false && x.r.instrument !== null && x.r.volExcess > 0)
        .sort((a, b) => b.r.volExcess - a.r.volExcess);
      const duals = pair.map((v) => v.exercise?.dual).filter((x) => x !== null && x !== undefined);
      const dual = duals.length
        ? {
            outer: duals[0]!.nOuter,
            inner: duals[0]!.nInner,
            gap: duals.reduce((t, x) => t + x.gap, 0),
            noise: duals.reduce((t, x) => t + 2 * x.gapSe, 0),
          }
        : null;
      return {
        paths: schedule[schedule.length - 1]!.paths,
        batchSize: S.batchSize,
        maxStep,
        stepChange: stepHalvingRaw[candidates[fi]!] ?? null,
        vegaPerUnit,
        calibration: fitRows.length
          ? {
              variant: fitRows[0]!.v.id,
              instrument: fitRows[0]!.row!.instrument,
              volError: fitRows[0]!.row!.error,
            }
          : null,
        repricing: rep.length
          ? { variant: rep[0]!.v.id, instrument: rep[0]!.r.instrument!, volExcess: rep[0]!.r.volExcess }
          : null,
        dual,
      };
    };
    const whatDecides: Record<string, WhatWouldDecide> = {};
    candidates.forEach((f, fi) => {
      const d = seq[fi]!;
      if (d.verdict !== 'undecided') return;
      whatDecides[f] = whatWouldDecide({
        decision: d.at,
        tau,
        parts: budgetFor(fi),
        context: decideContext(fi),
      });
    });

    // verdicts
    const verdicts: FactorVerdict[] = P.rules.factors.map((r) => {
      const idx = candidates.indexOf(r.factor);
      if (idx >= 0) {
        const d = seq[idx]!;
        const decides = whatDecides[r.factor];
        const reason =
          d.verdict === 'keep'
            ? `|Δ| clears τ by more than z·SE + b at ${schedule[d.decidedAtLook!]!.paths} paths`
            : d.verdict === 'drop'
              ? `|Δ| + z·SE + b stays below τ at ${schedule[d.decidedAtLook!]!.paths} paths`
              : d.at.budget > d.at.z * d.at.se
                ? 'the interval Δ ± (z·SE + b) still straddles τ; the error budget b dominates, so more paths alone will not decide it'
                : 'the interval Δ ± (z·SE + b) still straddles τ at the final path count; more paths would narrow z·SE';
        return {
          factor: r.factor,
          status: r.status,
          verdict: d.verdict,
          decision: d.at,
          decidedAtLook: d.decidedAtLook,
          reason: `${reason}${decides ? `; what would decide it: ${decides.summary}` : ''}; rules: ${r.reason}`,
        };
      }
      return {
        factor: r.factor,
        status: r.status,
        verdict: r.status === 'required' ? 'required' : 'notNeeded',
        decision: null,
        decidedAtLook: null,
        reason: r.reason,
      };
    });

    // recommended model and joint test
    const keepMask = candidates.reduce((m, f, fi) => (seq[fi]!.verdict !== 'drop' ? m | (1 << fi) : m), 0);
    const dropped = candidates.filter((_, fi) => seq[fi]!.verdict === 'drop');
    const recFactors = [...new Set([...required, ...candidates.filter((_, fi) => keepMask & (1 << fi))])];
    const recVariant = ladder.variants.find((v) => v.mask === keepMask)!;
    // Nothing dropped: the reduced model is the richest, so its difference, SE and budget are zero (a weight map
    // { [keepMask]: 1, [full]: −1 } would collapse to one key and price the richest alone).
    const same = keepMask === full;
    const jd = same ? { value: 0, se: 0 } : combination(final, { [col(keepMask)]: 1, [col(full)]: -1 });
    const joint =
      k > 0
        ? jointTest({
            dropped,
            difference: jd.value,
            se: jd.se,
            budget: same
              ? { stepHalving: 0, calibration: 0, repricing: 0, exerciseGap: hasExercise ? 0 : null }
              : {
                  stepHalving: stepBudget({ [col(keepMask)]: 1, [col(full)]: -1 }),
                  calibration: calBudget(keepMask, full),
                  repricing: repBudget(keepMask, full),
                  exerciseGap: gapFor(keepMask, full),
                },
            tau,
            alpha: S.alpha,
          })
        : null;

    // Shapley attribution over the ladder
    const shap = k > 0 ? shapley({ factors: candidates, stats: final, column: (m) => col(m) }) : [];

    // hedge ratios and their tests
    let greeks: StudyResults['greeks'] = null;
    const greekVerdicts: GreekVerdict[] = [];
    if (h) {
      greeks = ladder.variants.map((v) => {
        const dw = greekW.delta(v.mask);
        const rw = greekW.rho(v.mask)!;
        const vw = vegaOf(v.mask);
        return {
          variant: v.id,
          delta: dw ? combination(final, dw) : { value: 0, se: 0 },
          vega: vw && vegaStats ? combination(vegaStats, vw) : null,
          rho: combination(final, rw),
        };
      });
      const diffW = (f: (m: number) => Record<number, number> | null, fi: number) => {
        const a = f(full);
        const b = f(looFor(fi));
        if (!a || !b) return null;
        const w: Record<number, number> = { ...a };
        for (const [i, x] of Object.entries(b)) w[Number(i)] = (w[Number(i)] ?? 0) - x;
        return w;
      };
      const tests: {
        greek: GreekVerdict['greek'];
        thr: number;
        stats: ColumnStats | null;
        f: (m: number) => Record<number, number> | null;
      }[] = [
        { greek: 'delta', thr: h.deltaThreshold * 1e-4 * compiled.notional, stats: final, f: greekW.delta },
        { greek: 'vega', thr: h.vegaThreshold * 1e-4 * compiled.notional, stats: vegaStats, f: vegaOf },
        { greek: 'rho', thr: h.rhoThreshold * 1e-4 * compiled.notional, stats: final, f: greekW.rho },
      ];
      for (const t of tests) {
        if (!t.stats || k === 0) continue;
        const changes: Record<string, ValueSe> = {};
        const est: FactorEstimate[] = [];
        candidates.forEach((f, fi) => {
          const w = diffW(t.f, fi);
          if (!w) return;
          const e = combination(t.stats!, w);
          if (t.greek !== 'vega') changes[f] = stepChange(w);
          // Delta and rho are bumps of the main run's paths, which the step-halving run repeats on both grids:
          // they carry its discretisation part. Vega comes from its own recalibrated runs: no budget part.
          est.push({
            factor: f,
            delta: e.value,
            se: e.se,
            budget: {
              stepHalving: t.greek === 'vega' ? 0 : stepBudget(w),
              calibration: 0,
              repricing: 0,
              exerciseGap: null,
            },
          });
        });
        if (est.length === 0) continue;
        decideLook(est, t.thr, S.alpha).forEach((d) =>
          greekVerdicts.push({
            greek: t.greek,
            factor: d.factor as FactorId,
            threshold: t.thr,
            decision: d,
            ...(changes[d.factor] ? { stepHalvingChange: changes[d.factor] } : {}),
          }),
        );
      }
      limitations.push(
        'Hedge-ratio tests use one look at level α per hedge ratio. Delta and rho carry the step-halving part of the error budget (the check repeats their spot and rate bumps on both grids); vega has no budget part (its bumped runs recalibrate and are not repeated on the halved grid), and calibration and repricing residuals are budgeted for the price only.',
      );
    }

    // local-vol diagnostic: Black–Scholes, Heston and local vol on one finer grid (log-Euler needs small steps)
    let lvRun: {
      lv: ValueSe;
      smile: ValueSe;
      dynamics: ValueSe;
      total: ValueSe;
      stepHalving?: LocalVolStepCheck;
    } | null = null;
    if (lvVariant) {
      progress(
        0.74,
        'local vol',
        `Black–Scholes, Heston and Dupire local vol on steps of ${fmtStep(lvStep(analysis.lastTime))}`,
      );
      const lvVariants = [variants[0]!, variants[1 << svBit]!, lvVariant.spec];
      const grid = { eventTimes, maxStep: Math.min(maxStep, lvStep(analysis.lastTime)) };
      const r = await runInLooks({
        spec: { variants: lvVariants, payoff, grid, seed: S.seed, batchSize: S.batchSize, maxPaths: aux },
        executor,
        lookPaths: [aux],
        signal: opts.signal,
      });
      simSeconds += r.seconds;
      const st = toStats(r.looks[0]!);
      lvRun = {
        lv: combination(st, { 2: 1 }),
        smile: combination(st, { 2: 1, 0: -1 }),
        dynamics: combination(st, { 1: 1, 2: -1 }),
        total: combination(st, { 1: 1, 0: -1 }),
      };
      // Step-halving check of the split on the diagnostic's own grid (same random numbers on both grids):
      // columns [coarse BS, Heston, LV, fine BS, Heston, LV].
      checkAbort();
      progress(0.745, 'local-vol step check', 'the split on its grid and on the halved grid');
      const lvSh = await runStepHalving({
        variants: lvVariants,
        deal: compiled,
        eventTimes,
        maxStep: grid.maxStep,
        seed: S.seed,
        paths: stepPaths,
        batchSize: S.batchSize,
        signal: opts.signal,
        ...(hasExercise
          ? { evaluators: lvVariants.map((v) => makeExercisePathEvaluator(compiled, policies[v.id]!)) }
          : {}),
      });
      simSeconds += lvSh.pathSeconds + lvSh.payoffSeconds;
      const shs = toStats(lvSh.sums);
      const flagAbove = tau / 4;
      const lvChange = {
        smile: combination(shs, { 5: 1, 3: -1, 2: -1, 0: 1 }),
        dynamics: combination(shs, { 4: 1, 5: -1, 1: -1, 2: 1 }),
      };
      const flagged = (['smile', 'dynamics'] as const).filter((k) => {
        const c = lvChange[k];
        return Math.abs(c.value) > 2 * c.se && Math.abs(c.value) > flagAbove;
      });
      lvRun.stepHalving = {
        maxStep: grid.maxStep,
        paths: lvSh.paths,
        ...lvChange,
        flagAbove,
        flagged: [...flagged],
      };
      progress(0.748, 'local vol', 'vanilla reprice');
      for (const k of flagged)
        warnings.push(
          `Local-vol diagnostic: the ${k} part changes by ${lvChange[k].value.toPrecision(4)} ± ${lvChange[k].se.toPrecision(3)} when the log-Euler step of ${fmtStep(grid.maxStep)} is halved (beyond 2 SE and a quarter of τ); read the split with care or use a finer grid.`,
        );
      if (vanillas.length) {
        const fr = await runInLooks({
          spec: {
            variants: [lvVariant.spec],
            payoff: { factory: fairnessPayoffFactoryUrl(), description: { vanillas, gridTimes: eventTimes } },
            grid,
            seed: S.seed,
            batchSize: S.batchSize,
            maxPaths: aux,
          },
          executor,
          lookPaths: [aux],
          signal: opts.signal,
        });
        simSeconds += fr.seconds;
        const fs = columnStats(fr.looks[0]!);
        vanillas.forEach((q, qi) => {
          const mc = fs.mean(qi);
          lvVariant!.calibration.fit.push({
            instrument: `${q.equity} ${q.isCall ? 'call' : 'put'} K=${Math.round(q.strike * 100) / 100} T=${q.expiry} (Monte Carlo reprice)`,
            marketVol: q.vol,
            modelVol: q.vol,
            priceError: mc - q.market,
            mcError: { value: mc - q.market, se: fs.se(qi) },
          });
        });
      }
    }

    // sweeps over unquoted correlations
    const sweeps: Sweep[] = [];
    if (S.sweeps && snap.correlationRanges) {
      const rich = variants[full]!;
      const active = new Set([
        ...rich.equities.map((e) => `eq:${e.name}`),
        ...rich.equities.filter((e) => e.dynamics.kind === 'heston').map((e) => `var:${e.name}`),
        ...Object.keys(rich.rates)
          .filter((c) => rich.rates[c]!.hw)
          .map((c) => `rate:${c}`),
        ...rich.fx.map((f) => `fx:${f.name}`),
      ]);
      const isVarRate = (p: string) => {
        const [a, b] = p.split('|') as [string, string];
        return (
          (a.startsWith('var:') && b.startsWith('rate:')) || (b.startsWith('var:') && a.startsWith('rate:'))
        );
      };
      // Under QE a variance–rate correlation must be zero: those pairs are swept under full-truncation Euler, with
      // their base point re-run under Euler too, so each such sweep compares one scheme with itself.
      const needsEuler = (p: string) => S.scheme === 'qe' && isVarRate(p);
      const pairs = Object.entries(snap.correlationRanges).filter(([p]) =>
        p.split('|').every((d) => active.has(d)),
      );
      const eulerPairs = pairs.map(([p]) => p).filter(needsEuler);
      if (eulerPairs.length)
        limitations.push(
          `Swept under full-truncation Euler (Lord, Koekkoek & van Dijk 2010), ρ(v,r) ≠ 0 needs it: ${eulerPairs.join(', ')}. The study's QE scheme (Andersen 2008) assumes ρ(v,r) = 0, so these sweeps and their base point are re-run under Euler on the same paths; their prices carry Euler's own discretisation bias (not checked by step halving), so compare their points with their Euler base point, not with the QE prices.`,
        );
      pairs.forEach(([pair, range]) => {
        const [a, b] = pair.split('|') as [string, string];
        const ia = snap.correlation.names.indexOf(a);
        const ib = snap.correlation.names.indexOf(b);
        const base = ia >= 0 && ib >= 0 ? snap.correlation.matrix[ia]![ib]! : 0;
        sweeps.push({
          pair,
          range,
          base,
          ...(needsEuler(pair) ? { scheme: 'euler' as const, schemeNote: EULER_SWEEP_NOTE } : {}),
          points: [],
          band: 0,
          materialSomewhere: [],
          priceMovesMaterially: false,
        });
      });
      let done = 0;
      const sweepMasks = [...new Set([full, ...candidates.map((_, fi) => full ^ (1 << fi))])];
      const at = (mk: number) => sweepMasks.indexOf(mk);
      const sweepPoint = async (sw: Sweep, rho: number): Promise<SweepPoint | null> => {
        const [a, b] = sw.pair.split('|') as [string, string];
        const notPsd = () =>
          warnings.push(
            `sweep ${sw.pair} = ${rho.toFixed(3)}: the correlation matrix is not positive semi-definite; point skipped`,
          );
        let l: CalibratedLadder;
        try {
          l = calibrateLadder({
            ...ladderReq,
            ...(sw.scheme ? { scheme: sw.scheme } : {}),
            correlationOverride: { [`${a}|${b}`]: rho },
          });
        } catch (e) {
          // A variant's drivers (fitted spot–variance ρ included) may have no valid matrix at this point.
          if (e instanceof EngineError && e.code === 'E_NOT_PSD') {
            notPsd();
            return null;
          }
          throw e;
        }
        const m = l.variants[full]!.spec.correlation;
        const used = m.names.filter((x) => active.has(x));
        const sub = used.map((x) => used.map((y) => m.matrix[m.names.indexOf(x)]![m.names.indexOf(y)]!));
        if (!isPsd(sub)) {
          notPsd();
          return null;
        }
        const spec: RunSpec = {
          variants: sweepMasks.map((mk) => l.variants[mk]!.spec),
          payoff,
          grid: { eventTimes, maxStep },
          seed: S.seed,
          batchSize: S.batchSize,
          maxPaths: aux,
        };
        const r = await runInLooks({ spec, executor, lookPaths: [aux], signal: opts.signal });
        simSeconds += r.seconds;
        const st = toStats(r.looks[0]!);
        const deltas: Record<string, ValueSe> = {};
        candidates.forEach((f, fi) => {
          deltas[f] = combination(st, { [at(full)]: 1, [at(looFor(fi))]: -1 });
        });
        return { rho, price: combination(st, { [at(full)]: 1 }), deltas };
      };
      for (const sw of sweeps) {
        const n = S.sweeps.points;
        if (sw.scheme === 'euler') {
          checkAbort();
          const bp = await sweepPoint(sw, sw.base);
          if (bp) sw.basePoint = bp;
        }
        for (let i = 0; i < n; i++) {
          checkAbort();
          const rho = sw.range[0] + ((sw.range[1] - sw.range[0]) * i) / (n - 1);
          const pt = await sweepPoint(sw, rho);
          if (!pt) continue;
          sw.points.push(pt);
          done++;
          progress(
            0.75 + (0.15 * done) / Math.max(1, sweeps.length * n),
            'sweeps',
            `${sw.pair} = ${rho.toFixed(2)}${sw.scheme === 'euler' ? ' (Euler)' : ''}`,
          );
        }
        const prices = sw.points.map((p) => p.price.value);
        sw.band = prices.length ? Math.max(...prices) - Math.min(...prices) : 0;
        const z = 1.959963984540054;
        sw.priceMovesMaterially = sw.band > tau;
        sw.materialSomewhere = candidates.filter((f) =>
          sw.points.some((p) => Math.abs(p.deltas[f]!.value) - z * p.deltas[f]!.se > tau),
        );
      }
      if (sweeps.length)
        limitations.push(
          `Correlation sweeps run on ${aux} paths with the variants refitted at each point; a point whose matrix is not positive semi-definite is skipped, never repaired.`,
        );
    }

    // per-equity breakdown of the stochastic-vol factor (on request, deals on several equities): the richest
    // variant against the richest with one equity back on its Black–Scholes fit, on common random numbers
    const perEquity: { equity: string; delta: ValueSe }[] = [];
    if (S.perEquity && svBit >= 0 && variants[full]!.equities.length > 1) {
      progress(0.88, 'per-equity', 'stochastic vol of one equity at a time');
      const rich = variants[full]!;
      const flat = variants[full ^ (1 << svBit)]!;
      const drop = rich.equities.map((e) => ({
        ...rich,
        id: `${rich.id}-sv(${e.name})`,
        label: `${rich.label} without stochastic vol of ${e.name}`,
        equities: rich.equities.map((x) =>
          x.name === e.name ? flat.equities.find((y) => y.name === e.name)! : x,
        ),
      }));
      const r = await runInLooks({
        spec: {
          variants: [rich, ...drop],
          payoff,
          grid: { eventTimes, maxStep },
          seed: S.seed,
          batchSize: S.batchSize,
          maxPaths: aux,
        },
        executor,
        lookPaths: [aux],
        signal: opts.signal,
      });
      simSeconds += r.seconds;
      const st = toStats(r.looks[0]!);
      rich.equities.forEach((e, i) =>
        perEquity.push({ equity: e.name, delta: combination(st, { 0: 1, [i + 1]: -1 }) }),
      );
    }

    // other snapshots: parameters and verdicts
    const stability: StudyResults['stability'] = [];
    const paramsOf = (l: CalibratedLadder): Record<string, Record<string, number>> => {
      const out: Record<string, Record<string, number>> = {};
      for (const [n, p] of Object.entries(l.heston)) out[`heston ${n}`] = { ...p };
      for (const [c, x] of Object.entries(l.hullWhite))
        out[`hw ${c}`] = {
          a: x.params.a,
          sigma: typeof x.params.sigma === 'number' ? x.params.sigma : x.params.sigma[0]!,
        };
      return out;
    };
    stability.push({
      date: snap.date,
      verdicts: Object.fromEntries(verdicts.map((v) => [v.factor, v.verdict])),
      params: paramsOf(ladder),
    });
    for (let mi = 1; mi < markets.length; mi++) {
      checkAbort();
      const m = markets[mi]!;
      progress(0.9 + (0.09 * mi) / markets.length, 'stability', m.date);
      const l = calibrateLadder({ ...ladderReq, snapshot: m });
      const spec: RunSpec = {
        variants: l.variants.map((v) => v.spec),
        payoff,
        grid: { eventTimes, maxStep },
        seed: S.seed,
        batchSize: S.batchSize,
        maxPaths: aux,
      };
      const r = await runInLooks({ spec, executor, lookPaths: [aux], signal: opts.signal });
      simSeconds += r.seconds;
      const st = toStats(r.looks[0]!);
      const est = candidates.map((f, fi) => {
        const d = combination(st, { [full]: 1, [looFor(fi)]: -1 });
        return { factor: f, delta: d.value, se: d.se, budget: budgetFor(fi) };
      });
      const rows = k > 0 ? decideLook(est, tau, S.alpha) : [];
      const vmap: Record<string, string> = {};
      for (const v of verdicts) vmap[v.factor] = v.verdict;
      for (const r2 of rows) vmap[r2.factor] = r2.verdict;
      stability.push({ date: m.date, verdicts: vmap, params: paramsOf(l) });
    }
    if (markets.length > 1)
      limitations.push(
        `Other snapshots are judged at one look on ${aux} paths, with the pricing snapshot's error budget.`,
      );

    // model-risk range: variants that fit their instruments within 1 vol point
    const fits = ladder.variants.filter((v) => v.calibration.rmseVol <= 0.01);
    const fp = fits.map((v) => final.mean[col(v.mask)]!);
    const modelRisk = fp.length
      ? {
          min: Math.min(...fp),
          max: Math.max(...fp),
          spread: Math.max(...fp) - Math.min(...fp),
          variants: fits.map((v) => v.id),
        }
      : { min: 0, max: 0, spread: 0, variants: [] };

    const convergence = lookStats.map((st, j) => ({
      paths: schedule[j]!.paths,
      deltas: Object.fromEntries(
        candidates.map((f, fi) => {
          const d = combination(st, { [col(full)]: 1, [col(looFor(fi))]: -1 });
          return [f, { value: d.value, se: d.se }];
        }),
      ),
      richest: combination(st, { [col(full)]: 1 }),
    }));

    // limitations the user must know
    if (
      ladder.variants.some((v) => v.calibration.characteristicFunction === 'approximate') &&
      S.hestonRefit === 'monteCarlo'
    )
      limitations.push(
        'Heston under stochastic rates is refitted with the H1-HW approximation (Grzelak & Oosterlee 2011) corrected by Monte Carlo of the full model on its own seed.',
      );
    else if (ladder.variants.some((v) => v.calibration.characteristicFunction === 'approximate'))
      limitations.push(
        'Heston under stochastic rates is refitted with the H1-HW approximation (Grzelak & Oosterlee 2011), not the full model; its Monte Carlo repricing error on its own vanillas beyond two SE enters the error budget (repricing part).',
      );
    if (S.scheme === 'qe')
      limitations.push('Heston paths use the QE scheme (Andersen 2008) with ρ(variance, rate) = 0.');
    else limitations.push('Heston paths use full-truncation Euler (the labelled alternative to QE).');
    for (const v of ladder.variants)
      for (const [e, f] of Object.entries(v.calibration.feller))
        if (f < 1)
          limitations.push(
            `Feller condition fails for ${e} in ${v.label} (2κθ/σ² = ${f.toFixed(3)}): variance can touch zero.`,
          );
    if (lvVariant)
      limitations.push(
        "The local-volatility diagnostic uses Dupire's formula on an SVI fit of the grid, simulated by log-Euler on a fine grid (a week, or 1/200 of the deal's life) beside Black–Scholes and Heston on the same normals; the change of each part when that step is halved (same random numbers) is reported with its SE; its vanilla repricing on the study paths is shown with the other variants.",
      );
    const assumed = Object.entries(snap.correlationRanges ?? {}).map(([p, r]) => {
      const [a, b] = p.split('|') as [string, string];
      const ia = snap.correlation.names.indexOf(a);
      const ib = snap.correlation.names.indexOf(b);
      return `${p} = ${ia >= 0 && ib >= 0 ? snap.correlation.matrix[ia]![ib]! : 0} (plausible ${r[0]} … ${r[1]})`;
    });
    if (assumed.length) limitations.push(`Unquoted correlations assumed: ${assumed.join('; ')}.`);
    if (Object.values(snap.equities).some((e) => e.dividends?.length))
      limitations.push(
        'Discrete cash dividends enter calibration forwards but the simulated equities carry only the dividend yield.',
      );
    if (S.calibration === 'naive')
      limitations.push(
        'Naive ladder: factors were added without refitting, so Δ also measures miscalibration; the repricing error of a variant that adds stochastic rates is that miscalibration and stays out of the error budget.',
      );
    limitations.push(
      "This study informs a pricing-model decision; it does not replace model validation. Model choice remains subject to the firm's model-risk policy and independent review.",
    );

    const results: StudyResults = {
      looks: schedule,
      prices: [
        ...ladder.variants.map((v) => combination(final, { [col(v.mask)]: 1 })),
        ...(lvRun ? [lvRun.lv] : []),
      ],
      convergence,
      tau,
      joint,
      shapley: shap.map((x) => ({ factor: x.factor as FactorId, value: x.value, se: x.se })),
      greeks,
      greekVerdicts,
      sweeps,
      localVol: lvRun
        ? {
            smile: lvRun.smile,
            dynamics: lvRun.dynamics,
            total: lvRun.total,
            ...(lvRun.stepHalving ? { stepHalving: lvRun.stepHalving } : {}),
          }
        : null,
      ...(perEquity.length ? { perEquity } : {}),
      modelRisk,
      stepHalving,
      stepHalvingChange: stepHalvingRaw,
      budgetParts,
      repricing,
      ...(Object.keys(whatDecides).length ? { whatWouldDecide: whatDecides } : {}),
      stability,
    };
    const recSummary = recFactors.length
      ? recVariant.label
      : `${recVariant.label} (no stochastic factor beyond the base)`;
    const totalSeconds = (now() - tStart) / 1000;
    const payShare = sh.payoffSeconds / Math.max(1e-9, sh.payoffSeconds + sh.pathSeconds);
    const perVariant: Record<string, number> = {};
    // Monte Carlo time per variant: the run's simulation time split by each variant's measured share of path
    // generation in the in-process step-halving run (an estimate; batches of all variants run together).
    const vs = sh.variantSeconds;
    const vsum = vs.reduce((t, x) => t + x, 0) || 1;
    ladder.variants.forEach((v, vi) => {
      perVariant[v.id] = simSeconds * (1 - payShare) * (vs[vi]! / vsum);
    });
    progress(1, 'done');
    return sealStudy({
      format: STUDY_FORMAT,
      tool: { name: TOOL_NAME, version: TOOL_VERSION },
      input: { deal: P.input.deal, markets: P.input.markets, settings: S },
      analysis,
      rules: { factors: P.rules.factors, notes: P.rules.notes },
      candidates,
      required,
      ladder: allVariants,
      results,
      verdicts,
      recommended: { factors: recFactors, variant: recVariant.id, summary: recSummary },
      warnings,
      limitations,
      timings: {
        total: totalSeconds,
        calibration: calSeconds,
        simulation: simSeconds * (1 - payShare),
        payoff: simSeconds * payShare,
        perVariant,
        stages,
        workers,
      },
    });
  } finally {
    await executor.close();
  }
}

/** Display name of a factor. */
export function factorLabel(f: FactorId): string {
  return FACTOR_LABELS[f];
}

export type { VariantSpec };
