/**
 * The contract between the path generator (simulation), the payoff evaluator (deal) and the study.
 * Everything a worker receives is plain data (structured-cloneable); functions are built inside the worker.
 *
 * Layout of every path array: the value at grid step k for path p is `arr[k * nPaths + p]` (time-major),
 * so a payoff node computes a whole Float64Array of nPaths values per step.
 */
import type { CurveSpec } from '../market/types.ts';

/** Hull–White one-factor parameters: dr = (θ(t) − a r) dt + σ(t) dW, θ fitted to the curve. */
export interface HullWhiteParams {
  /** Mean reversion a (1/year). */
  a: number;
  /** Volatility σ (absolute, per sqrt(year)); piecewise constant when `sigmaTimes` is given. */
  sigma: number | number[];
  /** Right ends of the σ pieces (years), same length as `sigma` when it is an array. */
  sigmaTimes?: number[];
}

/** Heston parameters (variance process dv = κ(θ − v)dt + σ√v dW_v, corr(dW_S, dW_v) = ρ). */
export interface HestonParams {
  v0: number;
  kappa: number;
  theta: number;
  sigma: number;
  rho: number;
}

/** Dynamics of one equity. */
export type EquityDynamics =
  /** Lognormal with piecewise-constant forward vols: `vols[i]` applies on (volTimes[i−1], volTimes[i]]; flat after. */
  | { kind: 'bs'; volTimes: number[]; vols: number[] }
  | ({ kind: 'heston' } & HestonParams)
  /** Dupire local vol on a grid: values[i][j] at times[i] and log-moneyness logK[j] = ln(K/F(t)); bilinear, flat outside. */
  | { kind: 'localvol'; times: number[]; logK: number[]; values: number[][] };

export interface EquitySpec {
  name: string;
  currency: string;
  spot: number;
  /** Continuous dividend yield. */
  divYield: number;
  dynamics: EquityDynamics;
}

export interface RateSpec {
  curve: CurveSpec;
  /** Absent: deterministic rates read off the curve. */
  hw?: HullWhiteParams;
}

/** Lognormal FX rate, quoted as units of `domestic` per one unit of `foreign`. */
export interface FxSpec {
  name: string;
  foreign: string;
  spot: number;
  vol: number;
}

/**
 * Correlation over named drivers. Driver names: `eq:NAME` (equity), `var:NAME` (its variance),
 * `rate:CCY` (short rate), `fx:NAME` (FX rate). Missing pairs are zero.
 */
export interface CorrelationSpec {
  names: string[];
  matrix: number[][];
}

export type HestonScheme = 'qe' | 'euler';

/** One model variant of the ladder, as plain data. */
export interface VariantSpec {
  id: string;
  label: string;
  /** Currency of the numeraire (payment currency of the deal). */
  domestic: string;
  equities: EquitySpec[];
  /** Keyed by currency. Must contain `domestic`. */
  rates: Record<string, RateSpec>;
  fx: FxSpec[];
  correlation: CorrelationSpec;
  /** Heston scheme; default 'qe'. */
  hestonScheme?: HestonScheme;
}

/** A batch of simulated paths of one variant, read by payoff evaluators. */
export interface PathBatch {
  readonly nPaths: number;
  /** Simulation grid in years, times[0] = 0. */
  readonly times: Float64Array;
  /** Equity levels in their own currency, keyed by equity name. */
  readonly equity: Readonly<Record<string, Float64Array>>;
  /** Instantaneous variance of stochastic-vol equities (absent for others). */
  readonly variance: Readonly<Record<string, Float64Array>>;
  /** FX levels (domestic per foreign), keyed by FX name. */
  readonly fx: Readonly<Record<string, Float64Array>>;
  /** Short rate r(t_k) per currency; under deterministic rates f(0, t_k) on every path. */
  readonly shortRate: Readonly<Record<string, Float64Array>>;
  /** Domestic numeraire discount 1/B(t_k) (stochastic rates) or P(0, t_k) (deterministic). */
  readonly discount: Float64Array;
  /** Zero-coupon bond price P(t_k, T) in currency `ccy` on each path, written into `out` (length nPaths). */
  bond(ccy: string, k: number, T: number, out: Float64Array): void;
}

/**
 * Where a batch starts when it continues one path of another batch (nested simulation, e.g. the inner paths of a
 * dual bound): the new paths copy grid points 0 … `step` of path `path` of `from` and branch after it.
 */
export interface SimulationStart {
  /** Batch simulated by the same prepared variant on the same grid. */
  from: PathBatch;
  /** Index of the continued path in `from`. */
  path: number;
  /** Grid index of the branching time (0 … number of steps). */
  step: number;
}

/** Maps a batch of paths to present values (domestic, discounted to 0), one per path. */
export type PathEvaluator = (batch: PathBatch) => Float64Array;

/**
 * Deterministic re-use of paths for Greeks: a spot bump rescales equity paths; a parallel shift δ of a
 * currency's curve moves its short rate by δ, its discount by e^{−δ t}, its bonds by e^{−δ (T − t)} and the drift of
 * assets priced in it.
 */
export interface PathShift {
  spotScale?: Record<string, number>;
  rateShift?: Record<string, number>;
}
