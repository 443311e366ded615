/**
 * Plain-data shapes of early exercise: what a model or the deal layer must hand to the regression and pricing
 * passes, and what those passes return. Everything here is structured-cloneable.
 *
 * Conventions used throughout this folder:
 * - Money is *deflated*: every cash flow and exercise value is divided by the numeraire at its payment date
 *   (multiplied by 1/B(t) under stochastic rates, by P(0,t) under deterministic rates), so that summing deflated
 *   flows along a path and averaging over paths gives a price at time 0.
 * - Exercise dates are indexed j = 0 … n−1 in increasing time. Cash flows are split into n + 1 *segments*:
 *   segment 0 holds the flows paid on or before the first exercise date, segment j (1 ≤ j < n) those paid in
 *   (t_{j−1}, t_j], segment n those paid after the last exercise date. Exercising at date j pays the exercise value
 *   and cancels segments j+1 … n (the flows paid at t_j itself are kept).
 * - Array layout (time-major like the simulation contract): a value at date j for path p is `arr[j * nPaths + p]`;
 *   state variable v at date j for path p is `state[(j * nState + v) * nPaths + p]`.
 */

/** Who holds the right: the holder maximises the holder's value, the issuer minimises it. */
export type ExerciseHolder = 'holder' | 'issuer';

/** Paths a regression or pricing pass reads: states, exercise values and cash-flow segments of one batch. */
export interface ExerciseSample {
  /** Number of paths in the batch. */
  nPaths: number;
  /** Number of exercise dates n. */
  nDates: number;
  /** Number of state variables per date (same at every date). */
  nState: number;
  /** Regression state, `state[(j * nState + v) * nPaths + p]`, in natural units (levels, rates, variances). */
  state: Float64Array;
  /** Deflated value paid to the holder on exercise at date j, `exerciseValue[j * nPaths + p]`. */
  exerciseValue: Float64Array;
  /** Deflated cash-flow segments (n + 1 of them), `segments[s * nPaths + p]`. */
  segments: Float64Array;
  /** Numeraire deflator at each exercise date (1/B(t_j) or P(0,t_j)), `deflator[j * nPaths + p]`. */
  deflator: Float64Array;
  /** 1 where the deal is still alive at date j (not knocked out before), `alive[j * nPaths + p]`; absent = always. */
  alive?: Uint8Array;
}

/** Description of an exercise right over a sample source; plain data. */
export interface ExerciseRight {
  /** Exercise times in years (strictly increasing, > 0). */
  times: number[];
  holder: ExerciseHolder;
  /** Names of the state variables, in the order of `ExerciseSample.state`, e.g. `eq:ALDR`, `rate:DOM`. */
  stateNames: string[];
  /**
   * Restrict the regression (and exercise) of a holder's right to paths with a positive exercise value
   * (Longstaff & Schwartz 2001, Sec. 2: only in-the-money paths are used). Default true for the holder,
   * ignored for the issuer (an issuer's call compares against all alive paths).
   */
  inTheMoneyOnly?: boolean;
}

/** One regression term: a monomial ∏ z_v^{e_v} in the standardised state z. */
export interface BasisTerm {
  /** Exponent per state variable (same order as `stateNames`). */
  exponents: number[];
  /** Readable form, e.g. `1`, `z(eq:ALDR)`, `z(eq:ALDR)·z(rate:DOM)`. */
  label: string;
}

/** The regression basis: every monomial of total degree ≤ `degree` in the standardised state, cross terms included. */
export interface BasisSpec {
  kind: 'polynomial';
  /** Highest total degree (0, 1, 2 or 3). */
  degree: number;
  stateNames: string[];
  terms: BasisTerm[];
  /** Also regress on the standardised exercise value itself (an extra term). */
  includeExerciseValue: boolean;
  /** Plain-language statement of the basis. */
  description: string;
}

/** Fitted continuation-value regression at one exercise date. */
export interface DatePolicy {
  /** Exercise time in years. */
  time: number;
  /** How the date was fitted: the full basis, a reduced one (too few paths), or not at all (no eligible path). */
  fit: 'full' | 'reduced' | 'none';
  /** Number of paths the regression used. */
  nObs: number;
  /** Mean per state variable used to standardise (natural units). */
  mean: number[];
  /** Scale per state variable used to standardise; 0 marks a variable that does not vary at this date (dropped). */
  scale: number[];
  /** Mean and scale of the exercise value in time-t_j money (when the basis includes it). */
  exerciseMean: number;
  exerciseScale: number;
  /** Indices into `BasisSpec.terms` (then `terms.length` for the exercise-value term) that were used. */
  activeTerms: number[];
  /** Coefficients, one per active term: continuation value in time-t_j money (undeflated). */
  coefficients: number[];
  /** Ridge weight λ applied to the standardised design (0 when the design was well conditioned). */
  ridge: number;
  /** Root-mean-square residual of the fit (time-t_j money). */
  rmsResidual: number;
}

/** An exercise policy: the basis and one fitted regression per date; plain data for the saved study. */
export interface ExercisePolicy {
  format: 'factor-triage/exercise-policy@1';
  holder: ExerciseHolder;
  inTheMoneyOnly: boolean;
  basis: BasisSpec;
  dates: DatePolicy[];
  /** Seed and path count of the regression pass that produced it. */
  regression: { seed: string; nPaths: number };
}

/** Mergeable sums of a pricing pass (per batch; merged in batch order). */
export interface ExerciseSums {
  nPaths: number;
  /** Σ value and Σ value² over paths (deflated holder value). */
  sum: number;
  sumSq: number;
  /** Paths exercised at each date. */
  exercisedAt: number[];
}

/** Price of an exercise right with its two bounds, for reports. */
export interface ExerciseEstimate {
  /** Policy (primal) estimate on independent pricing paths: biased low for a holder's right, high for an issuer's. */
  primal: { value: number; se: number; nPaths: number };
  /** The same policy applied to the regression paths (in-sample; biased the other way by foresight). */
  inSample: number;
  /** Dual bound (Andersen & Broadie 2004): an upper bound for a holder's right, a lower one for an issuer's. */
  dual?: DualEstimate;
  /** Probability of exercise at each date under the policy (pricing paths), and of never exercising. */
  exerciseProbability: { time: number; probability: number }[];
  neverExercised: number;
  /** Which side each estimate is biased to, in words. */
  biasNote: string;
}

/** Result of the dual (Andersen–Broadie) pass. */
export interface DualEstimate {
  /** The bound: primal value + gap (holder) or primal value − gap (issuer). */
  value: number;
  /** Duality gap estimate (≥ 0) and its standard error. */
  gap: number;
  gapSe: number;
  /** Standard error of the bound (primal and gap errors combined as independent). */
  se: number;
  nOuter: number;
  nInner: number;
  /** Inner paths simulated in total, and wall time in milliseconds (cost). */
  innerPaths: number;
  millis: number;
  /**
   * With more inner paths near the exercise boundary: the band (width in units of the date's regression rms
   * residual / √nInner), the inner paths inside it, and how many of the inner runs (outer path × date) fell in it.
   */
  nearBoundary?: { width: number; innerPaths: number; runs: number; of: number };
}
