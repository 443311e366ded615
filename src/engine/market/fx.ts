/**
 * FX forwards by covered interest parity: F(0,t) = S₀ · P_f(0,t) / P_d(0,t), with S₀ in units of the domestic
 * currency per one unit of the foreign (J. C. Hull, "Options, Futures, and Other Derivatives", 8th ed. 2012,
 * chapter on forward and futures prices, interest rate parity F₀ = S₀e^{(r − r_f)T}; the form with discount
 * factors is common practice).
 */
import { fail, requirePositive } from '../errors.ts';
import type { DiscountCurve, FxQuote } from './types.ts';

/**
 * Forward FX rate (domestic per foreign) for delivery at t years. `curves` must hold the quote's foreign and
 * domestic currencies.
 */
export function fxForward(
  quote: Pick<FxQuote, 'foreign' | 'domestic' | 'spot'>,
  curves: Record<string, DiscountCurve>,
  t: number,
  field = 'fx',
): number {
  requirePositive(`${field}.spot`, quote.spot);
  const pf = curves[quote.foreign];
  const pd = curves[quote.domestic];
  if (!pf) fail('E_MISSING_CURVE', `${field}.foreign`, 'must name a currency with a curve', quote.foreign);
  if (!pd) fail('E_MISSING_CURVE', `${field}.domestic`, 'must name a currency with a curve', quote.domestic);
  return (quote.spot * pf.df(t)) / pd.df(t);
}
