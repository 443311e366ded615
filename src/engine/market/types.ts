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
