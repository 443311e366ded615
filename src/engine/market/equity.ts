/**
 * Equity forwards with a continuous dividend yield and discrete cash dividends in the escrowed model:
 * F(0,t) = (S₀ − Σ_{0 < tᵢ ≤ t} Dᵢ·P(0,tᵢ)) · e^{−q·t} / P(0,t).
 * Source: J. C. Hull, "Options, Futures, and Other Derivatives" (8th ed. 2012), chapter on the Black–Scholes–Merton
 * model, European options on dividend-paying stocks (spot less the present value of dividends), and the
 * forward with a known yield, F = S₀e^{(r−q)T} (chapter on forward prices). Combining both is our convention: the
 * yield applies to the spot net of escrowed cash dividends.
 */
import { fail, requireFinite, requirePositive } from '../errors.ts';
import type { DiscountCurve, EquityQuote } from './types.ts';
import { exp } from '../math/detMath.ts';

/** Present value (at time 0, in the equity's currency) of the cash dividends paid in (0, t]. */
export function dividendPv(eq: Pick<EquityQuote, 'dividends'>, curve: DiscountCurve, t: number): number {
  let pv = 0;
  for (const d of eq.dividends ?? []) if (d.t > 0 && d.t <= t) pv += d.amount * curve.df(d.t);
  return pv;
}

/**
 * Forward price F(0,t) of the equity (currency units) under `curve` (the curve of the equity's currency),
 * t in years ≥ 0. Throws when the dividends' PV reaches the spot.
 */
export function equityForward(
  eq: Pick<EquityQuote, 'spot' | 'divYield' | 'dividends'>,
  curve: DiscountCurve,
  t: number,
  field = 'equity',
): number {
  requirePositive(`${field}.spot`, eq.spot);
  requireFinite(`${field}.divYield`, eq.divYield);
  const net = eq.spot - dividendPv(eq, curve, t);
  if (!(net > 0))
    fail(
      'E_DIVIDENDS_EXCEED_SPOT',
      `${field}.dividends`,
      `must have a present value below the spot ${eq.spot} up to t = ${t}`,
      eq.spot - net,
      'check the dividend amounts and their currency',
    );
  return (net * exp(-eq.divYield * t)) / curve.df(t);
}
