/**
 * Vanilla option formulas in the shape the calibration instruments use (an option on a forward with `isCall`,
 * `expiry` and an optional discount factor): Black (lognormal) and Bachelier (normal) prices, their vegas, and
 * implied-vol inversion. Prices and implied vols are the models layer's (models/blackScholes.ts, models/bachelier.ts);
 * this file only adapts the shape and keeps the calibration's conventions: zero or missing vol (or expiry) gives the
 * discounted intrinsic value, and an implied vol outside the no-arbitrage bounds is NaN rather than an error, so a
 * fit can step back into range. Prices are undiscounted unless a discount factor is passed.
 */

import { normCdf, normPdf } from '../math/normal.ts';
import {
  bachelierImpliedVol as normalImpliedVol,
  bachelierPrice as normalPrice,
} from '../models/bachelier.ts';
import { blackUndiscounted, impliedSdFromUndiscounted } from '../models/blackScholes.ts';
import { log } from '../math/detMath.ts';

export { normCdf, normPdf };

/** Inputs of a vanilla on a forward. Times in years, vols as decimals (lognormal) or absolute (normal). */
export interface ForwardOption {
  forward: number;
  strike: number;
  /** Time to expiry, years. */
  expiry: number;
  /** Discount factor to the payment date (1 for an undiscounted price). */
  df?: number;
  isCall: boolean;
}

/** Black (1976) price on a forward: df·[F N(d1) − K N(d2)] for a call, df·[K N(−d2) − F N(−d1)] for a put. */
export function blackPrice(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const { forward: F, strike: K } = o;
  const sd = o.vol * Math.sqrt(o.expiry);
  if (!(sd > 0)) return df * Math.max(o.isCall ? F - K : K - F, 0);
  return df * blackUndiscounted(o.isCall ? 'call' : 'put', F, K, sd);
}

/** Black vega dPrice/dvol (per 1.00 of vol): df·F φ(d1)√T (Black 1976, differentiated; common practice). */
export function blackVega(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const sd = o.vol * Math.sqrt(o.expiry);
  if (!(sd > 0)) return 0;
  const d1 = log(o.forward / o.strike) / sd + 0.5 * sd;
  return df * o.forward * normPdf(d1) * Math.sqrt(o.expiry);
}

/** Bachelier (1900) normal-model price: df·[(F−K)N(d) + σ√T n(d)], d = (F−K)/(σ√T), call; put with K − F. */
export function bachelierPrice(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const sd = o.vol * Math.sqrt(o.expiry);
  const m = o.forward - o.strike;
  if (!(sd > 0)) return df * Math.max(o.isCall ? m : -m, 0);
  return normalPrice({
    type: o.isCall ? 'call' : 'put',
    F: o.forward,
    K: o.strike,
    T: o.expiry,
    vol: o.vol,
    annuity: df,
  });
}

/** Bachelier vega dPrice/dσ_N = df·√T n(d) (Bachelier 1900, differentiated; common practice). */
export function bachelierVega(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const sd = o.vol * Math.sqrt(o.expiry);
  if (!(sd > 0)) return 0;
  return df * Math.sqrt(o.expiry) * normPdf((o.forward - o.strike) / sd);
}

/**
 * Black implied vol (decimal per √year) of a price on a forward, by the models layer's normalised-price solver
 * (`impliedSdFromUndiscounted`, after Jäckel 2015). 0 for a price equal to intrinsic; NaN when the price lies
 * outside the no-arbitrage bounds (intrinsic, F for a call or K for a put, undiscounted).
 */
export function blackImpliedVol(o: ForwardOption & { price: number }): number {
  const df = o.df ?? 1;
  const F = o.forward;
  const K = o.strike;
  const p = o.price / df;
  const intrinsic = Math.max(o.isCall ? F - K : K - F, 0);
  const upper = o.isCall ? F : K;
  if (!(p > intrinsic) || !(p < upper)) return p === intrinsic ? 0 : NaN;
  return impliedSdFromUndiscounted(o.isCall ? 'call' : 'put', p, F, K) / Math.sqrt(o.expiry);
}

/**
 * Bachelier implied normal vol (units of F per √year) by the models layer's solver; 0 for a price equal to
 * intrinsic, NaN below it.
 */
export function bachelierImpliedVol(o: ForwardOption & { price: number }): number {
  const df = o.df ?? 1;
  const p = o.price / df;
  const m = o.forward - o.strike;
  const intrinsic = Math.max(o.isCall ? m : -m, 0);
  if (!(p > intrinsic)) return p === intrinsic ? 0 : NaN;
  return normalImpliedVol({
    type: o.isCall ? 'call' : 'put',
    F: o.forward,
    K: o.strike,
    T: o.expiry,
    price: p,
  });
}
