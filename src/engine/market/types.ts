/**
 * Plain-data shapes of market inputs shared across the engine (the snapshot schema in `snapshot.ts` validates them).
 * Times are year fractions (ACT/365F from the valuation date); rates are continuously compounded decimals.
 */

/** A discount curve given by pillars: zero rates or discount factors at increasing times (years). */
export interface CurveSpec {
  /** Currency code, e.g. `DOM` in the demo scenario. */
  currency: string;
  /** Pillar times in years, strictly increasing, > 0. */
  times: number[];
  /** Continuously compounded zero rates at the pillars (give this or `discountFactors`). */
  zeroRates?: number[];
  /** Discount factors at the pillars (give this or `zeroRates`). */
  discountFactors?: number[];
}

/** The discount curve an engine reads: every method takes a time in years. */
export interface DiscountCurve {
  readonly currency: string;
  /** Discount factor P(0,t). */
  df(t: number): number;
  /** Continuously compounded zero rate. */
  zero(t: number): number;
  /** Instantaneous forward f(0,t), continuous in t. */
  instFwd(t: number): number;
  /** Simply compounded forward rate over [t1, t2]. */
  fwd(t1: number, t2: number): number;
}

/**
 * Implied-vol grid of one equity: rows are expiries (years), columns strikes. Strikes are absolute levels
 * (`strikes`) or spot moneyness K/S0 (`moneyness`); exactly one is given. Vols are lognormal decimals.
 */
export interface VolGridSpec {
  expiries: number[];
  strikes?: number[];
  moneyness?: number[];
  /** vols[i][j]: expiry i, strike j. */
  vols: number[][];
}

export interface EquityQuote {
  /** Currency the equity is quoted in. */
  currency: string;
  spot: number;
  /** Continuous dividend yield. */
  divYield: number;
  /** Discrete cash dividends (time in years, amount in the equity's currency), optional. */
  dividends?: { t: number; amount: number }[];
  vols: VolGridSpec;
}

/** Cap/floor (caplet) or swaption vol quotes of one currency; the quote type is required. */
export interface RateVolSpec {
  instrument: 'caplet' | 'swaption';
  /** `normal` (absolute, e.g. 0.0085 = 85 bp) or `lognormal` (relative, e.g. 0.22). */
  type: 'normal' | 'lognormal';
  /**
   * Caplet: expiry = fixing time, tenor = accrual length. Swaption: expiry = option expiry, tenor = swap length.
   * Strike absent means at the money (forward or par swap rate).
   */
  quotes: { expiry: number; tenor: number; strike?: number; vol: number }[];
  /** Fixed-leg / caplet payment frequency per year (default 1 for swaptions, 1/tenor for caplets). */
  frequency?: number;
}

/** One FX rate, quoted as units of `domestic` per one unit of `foreign`. */
export interface FxQuote {
  foreign: string;
  domestic: string;
  spot: number;
  /** At-the-money lognormal vol. */
  vol: number;
}

/**
 * A market snapshot on one date: everything quoted that the ladder is calibrated to.
 * Driver names in `correlation`: `eq:NAME`, `var:NAME`, `rate:CCY`, `fx:NAME` (NAME as in `equities`/`fx`).
 */
export interface MarketSnapshot {
  schema: 'factor-triage/market@1';
  /** Valuation date, ISO `YYYY-MM-DD`. */
  date: string;
  name?: string;
  /** Reporting / numeraire currency of the snapshot. */
  domestic: string;
  /** Discount curve per currency (the CurveSpec `currency` field must match the key). */
  curves: Record<string, CurveSpec>;
  equities: Record<string, EquityQuote>;
  rateVols?: Record<string, RateVolSpec>;
  /** Keyed by a name such as `ASH/DOM`. */
  fx?: Record<string, FxQuote>;
  correlation: { names: string[]; matrix: number[][] };
  /**
   * Plausible ranges for correlations the market does not quote, keyed `A|B` with driver names,
   * e.g. `eq:ALDR|rate:DOM`: [-0.4, 0.4]. Used by sweeps.
   */
  correlationRanges?: Record<string, [number, number]>;
}
