/**
 * Plain-data shapes of a factor study: its input (deal, markets, settings) and the saved study file.
 * All amounts are in the deal's payment currency at the valuation date; times are years (ACT/365F).
 */
import type { DealAnalysis, DealInput } from '../deal/types.ts';
import type { MarketSnapshot } from '../market/types.ts';
import type { VariantSpec } from '../simulation/types.ts';
import type {
  ErrorBudget,
  FactorLookDecision,
  JointTest,
  Look,
  SpendingKind,
  Threshold,
  Verdict,
} from './decision.ts';
import type { FactorId, FactorRule, RuleSettings } from './rules.ts';
import type { WhatWouldDecide } from './whatWouldDecide.ts';

/** Format tag of a saved study. */
export const STUDY_FORMAT = 'factor-triage/study@1' as const;

/** Name of the tool that writes study files. */
export const TOOL_NAME = 'factor-triage';

/** How stochastic factors are added to a variant. */
export type CalibrationMode =
  /** Every variant is refitted to the same instruments (DESIGN step 5). */
  | 'fair'
  /** A factor is added without refitting the rest (labelled alternative: measures miscalibration too). */
  | 'naive';

/** Settings of one study, all stored in the study file. */
export interface StudySettings {
  /** Run seed (a string or a non-negative safe integer). */
  seed: string | number;
  /** Final path count. */
  paths: number;
  /** Path count at the first look; looks double from here to `paths`. */
  firstPaths: number;
  /** Paths per batch (the unit of work; results do not depend on the worker count). */
  batchSize: number;
  /** Largest simulation step (years). */
  maxStep: number;
  /** Heston scheme: 'qe' (Andersen 2008) or the labelled alternative 'euler'. */
  scheme: 'qe' | 'euler';
  /** Family-wise error rate over all looks and factors. */
  alpha: number;
  spending: SpendingKind;
  /** Materiality threshold on price. */
  threshold: Threshold;
  calibration: CalibrationMode;
  /** Hedge ratios: bump sizes and thresholds (null: not computed). */
  greeks: GreekSettings | null;
  /** Correlation sweeps over the market's plausible ranges. */
  sweeps: { points: number } | null;
  /** The local-volatility diagnostic beside the ladder. */
  localVol: boolean;
  rules: RuleSettings;
  /** Factors simulated even where the rules say `notNeeded`, to confirm the rules by Δ. */
  extraCandidates: FactorId[];
  /** Absolute strike of the Black–Scholes calibration targets per equity (default: the ATM forward). */
  calibrationStrikes: Record<string, number>;
  /** Share of `paths` used by the auxiliary runs (step halving, sweeps, other snapshots), in (0, 1]. */
  auxiliaryFraction: number;
  /**
   * Heston refit under stochastic rates: 'analytic' (H1-HW characteristic function, default) or 'monteCarlo' (H1-HW
   * corrected by Monte Carlo of the full model on its own seed, never the study's paths).
   */
  hestonRefit?: 'analytic' | 'monteCarlo';
  /** Break the stochastic-vol factor down per equity (deals on several equities). */
  perEquity?: boolean;
}

/** Bump sizes and materiality thresholds of the hedge ratios. */
export interface GreekSettings {
  /** Relative spot bump (sticky moneyness: the whole path is rescaled), e.g. 0.01. */
  spotBump: number;
  /** Parallel zero-rate shift (absolute), e.g. 1e-4. */
  rateBump: number;
  /** Absolute shift of every implied vol in the grid, e.g. 0.01 (one vol point); each variant is recalibrated. */
  volBump: number;
  /**
   * Materiality thresholds in basis points of notional: delta per 1% spot move, vega per vol point, rho per basis
   * point of the domestic curve (e.g. 10, 5, 0.5).
   */
  deltaThreshold: number;
  vegaThreshold: number;
  rhoThreshold: number;
}

/** What a study is run on. */
export interface StudyInput {
  deal: DealInput;
  /** First: the pricing snapshot; others (other dates) measure parameter and verdict stability. */
  markets: MarketSnapshot[];
  settings: StudySettings;
}

/** An estimate with its Monte Carlo standard error. */
export interface ValueSe {
  value: number;
  se: number;
}

/** One calibration instrument's fit: market, model (analytic) and model by Monte Carlo on the study's paths. */
export interface FitRow {
  instrument: string;
  /** Market quote (implied vol, or rate vol). */
  marketVol: number;
  /** The variant's own pricer, in vol terms. */
  modelVol: number;
  /** Price error model − market (currency per unit notional of the instrument). */
  priceError: number;
  /** Monte Carlo reprice on the study's paths minus market price, with SE (evidence of fairness). */
  mcError: ValueSe | null;
  /** For Monte Carlo rows: whether the vanilla is one of this variant's calibration instruments. */
  calibrated?: boolean;
  /** Expiry of an equity calibration row (years); absent for rate rows and in older files. */
  expiry?: number;
  /**
   * For Monte Carlo rows: standard error of the repriced vol (`modelVol`), price SE divided by the quote's
   * Black–Scholes vega (Bachelier vega for caplets): first-order delta method, common practice. Absent in older files.
   */
  mcVolSe?: number;
}

/**
 * One variant's Monte Carlo repricing error beyond noise: over its calibrated vanillas, the largest
 * max(0, |σ_MC − σ_market| − 2·SE_σ) (decimal vol), the quantity the `repricing` part of the error budget turns into
 * price with the deal's vega.
 */
export interface VariantRepricing {
  /** Largest implied-vol error beyond two SE over the calibrated vanillas (decimal, e.g. 0.004 = 0.4 vol points). */
  volExcess: number;
  /** The vanilla that sets it; null when every vanilla reprices within two SE. */
  instrument: string | null;
  /** Number of calibrated vanillas judged. */
  quotes: number;
  /**
   * The same measure on the Hull–White caplets in normal (Bachelier) vol, decimal; null when the variant has none.
   * Shown only: it is not part of the budget (the study has no deal sensitivity to rate vols to turn it into price).
   */
  capletNormalVolExcess: number | null;
  /**
   * Whether `volExcess` enters the budget: false for a naive variant that adds stochastic rates without refitting
   * (its repricing error is the miscalibration its Δ measures). Absent in older files.
   */
  inBudget?: boolean;
}

/** One model variant of the ladder. */
export interface LadderVariant {
  id: string;
  label: string;
  /** Bit mask over the candidate factors (bit i = candidates[i]). */
  mask: number;
  factors: FactorId[];
  /** Role in the study. */
  role: 'ladder' | 'localVol' | 'naive';
  spec: VariantSpec;
  /**
   * Early exercise under this variant (deals with exercise rights): the Longstaff–Schwartz policy fitted on its own
   * regression paths (used on the study's paths), its policy estimate and the Andersen–Broadie dual bound.
   */
  exercise?: {
    policy: unknown;
    primal: ValueSe;
    dual: { value: number; gap: number; gapSe: number; se: number; nOuter: number; nInner: number } | null;
    exerciseProbability: { time: number; probability: number }[];
    neverExercised: number;
    biasNote: string;
  };
  calibration: {
    /** exact / approximate / none: whether pricing the instruments used a characteristic function. */
    characteristicFunction: 'exact' | 'approximate' | 'none';
    rmseVol: number;
    maxAbsVolError: number;
    seconds: number;
    fit: FitRow[];
    warnings: string[];
    /** Feller ratio 2κθ/σ² of each Heston equity (≥ 1: variance stays positive). */
    feller: Record<string, number>;
  };
}

/** Result of one verdict, price or a hedge ratio. */
export interface FactorVerdict {
  factor: FactorId;
  /** What the rules said. */
  status: FactorRule['status'];
  verdict: Verdict | 'required' | 'notNeeded';
  /** Δ (richest − richest without it), SE, budget and the decision row; null when not simulated. */
  decision: FactorLookDecision | null;
  decidedAtLook: number | null;
  reason: string;
}

export interface GreekVerdict {
  greek: 'delta' | 'vega' | 'rho';
  factor: FactorId;
  threshold: number;
  decision: FactorLookDecision;
  /**
   * Delta and rho: the change of this hedge-ratio difference when the step is halved (same random numbers), with
   * its SE; the decision's budget is max(0, |change| − 2 SE). Absent for vega and in older files.
   */
  stepHalvingChange?: ValueSe;
}

/**
 * Step-halving check of the local-vol split: Black–Scholes, Heston and local vol on the diagnostic's grid and on the
 * grid with every step cut in two, on the same random numbers (coarse normal = (Z_2k + Z_2k+1)/√2).
 */
export interface LocalVolStepCheck {
  /** Largest step of the diagnostic's grid (years); the check's fine grid halves every step. */
  maxStep: number;
  /** Paths of the check. */
  paths: number;
  /** Change of the smile part (LV − BS) from the grid to the halved grid, with its SE on paired paths. */
  smile: ValueSe;
  /** Change of the dynamics part (Heston − LV), with its SE. */
  dynamics: ValueSe;
  /**
   * Size a change must exceed (beyond 2 SE) to be flagged: a quarter of τ (a choice of this tool: such a change moves
   * a part by a material share of the threshold).
   */
  flagAbove: number;
  /** Parts whose change exceeds both 2 SE and `flagAbove`. */
  flagged: ('smile' | 'dynamics')[];
}

/** One point of a correlation sweep. */
export interface SweepPoint {
  rho: number;
  price: ValueSe;
  /** Per candidate factor, Δ at this correlation. */
  deltas: Record<string, ValueSe>;
}

export interface Sweep {
  /** Driver pair `A|B` as in the market's correlationRanges. */
  pair: string;
  range: [number, number];
  base: number;
  points: SweepPoint[];
  /** Price band over the range (max − min of the richest variant's price). */
  band: number;
  /**
   * Heston scheme of the sweep's points: 'euler' (full-truncation Euler) when a study run under QE sweeps a
   * variance–rate correlation, which QE cannot carry (ρ(v,r) ≠ 0 needs Euler). Absent: the study's scheme.
   */
  scheme?: 'qe' | 'euler';
  /** Label of an Euler sweep of a QE study, for display: "Euler, ρ(v,r) ≠ 0 needs it". */
  schemeNote?: string;
  /**
   * For an Euler sweep of a QE study: the base point (ρ at its market value) re-run under Euler on the sweep's paths,
   * so the points are compared with a base of the same scheme. Absent otherwise and in older files.
   */
  basePoint?: SweepPoint;
  /** Factors whose Δ exceeds τ somewhere in the range (beyond z·SE). */
  materialSomewhere: string[];
  /** The richest price moves by more than τ across the range. */
  priceMovesMaterially: boolean;
}

/** Results of the simulation. */
export interface StudyResults {
  looks: Look[];
  /** Price of each ladder variant (same order as `ladder.variants`). */
  prices: ValueSe[];
  /** Δ per candidate factor at each look (convergence). */
  convergence: { paths: number; deltas: Record<string, ValueSe>; richest: ValueSe }[];
  tau: number;
  joint: JointTest | null;
  shapley: { factor: FactorId; value: number; se: number }[];
  greeks: { variant: string; delta: ValueSe; vega: ValueSe | null; rho: ValueSe }[] | null;
  greekVerdicts: GreekVerdict[];
  sweeps: Sweep[];
  /** On request: Δ of the stochastic vol of each equity alone (richest minus richest with that equity on BS). */
  perEquity?: { equity: string; delta: ValueSe }[];
  /** Local-vol split of the stochastic-vol effect (deterministic rates). */
  localVol: {
    smile: ValueSe;
    dynamics: ValueSe;
    total: ValueSe;
    /** Step-halving check of the split on its own grid; absent in older files. */
    stepHalving?: LocalVolStepCheck;
  } | null;
  /** Spread of prices across variants that fit the market within tolerance. */
  modelRisk: { min: number; max: number; spread: number; variants: string[] };
  /** Step-halving part of each factor's budget: max(0, |change of Δ on the halved grid| − 2 SE of that change). */
  stepHalving: Record<string, number>;
  /** The raw change of each Δ when the step is halved (same random numbers), with its SE. */
  stepHalvingChange: Record<string, ValueSe>;
  /**
   * Per candidate factor, the parts of its error budget (the same at every look; their sum is each decision's
   * `budget`). Absent in files written before the parts were recorded.
   */
  budgetParts?: Record<string, ErrorBudget>;
  /**
   * Per undecided candidate factor: the largest part of its interval Δ ± (z·SE + b) and what would reduce each part.
   * Absent when no factor is undecided and in older files.
   */
  whatWouldDecide?: Record<string, WhatWouldDecide>;
  /** Per ladder variant id, its Monte Carlo repricing error beyond noise. Absent in older files. */
  repricing?: Record<string, VariantRepricing>;
  /** Other snapshots: per date, the verdicts and calibrated parameters. */
  stability: {
    date: string;
    verdicts: Record<string, string>;
    params: Record<string, Record<string, number>>;
  }[];
}

/** Wall-time split of a run (seconds); excluded from the bit-identity comparison, included in the hash. */
export interface StudyTimings {
  total: number;
  calibration: number;
  simulation: number;
  payoff: number;
  perVariant: Record<string, number>;
  /** Wall time per stage of the study (calibration, step halving, vega, pricing, fairness, local vol, sweeps, ...). */
  stages?: Record<string, number>;
  workers: number;
}

/** The saved study file. */
export interface SavedStudy {
  format: typeof STUDY_FORMAT;
  tool: { name: string; version: string };
  input: StudyInput;
  analysis: DealAnalysis;
  rules: { factors: FactorRule[]; notes: string[] };
  candidates: FactorId[];
  required: FactorId[];
  ladder: LadderVariant[];
  results: StudyResults;
  verdicts: FactorVerdict[];
  /** The recommended model: factors kept, required, or undecided (kept to be safe). */
  recommended: { factors: FactorId[]; variant: string; summary: string };
  warnings: string[];
  limitations: string[];
  timings: StudyTimings;
  /** SHA-256 (hex) of the canonical JSON of this object without the `hash` member. */
  hash: string;
}
