/**
 * Vanilla option formulas used by the calibration instruments: Black (lognormal) and Bachelier (normal) on a forward,
 * their vegas, and implied-vol inversion. Prices are undiscounted unless a discount factor is passed.
 */

import { normCdf, normPdf } from '../math/normal.ts';

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

/** Black (1976) price on a forward: df·[F N(d1) − K N(d2)] for a call; the put by parity. */
export function blackPrice(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const { forward: F, strike: K, expiry: T, vol } = o;
  const intrinsic = Math.max(o.isCall ? F - K : K - F, 0);
  const sd = vol * Math.sqrt(T);
  if (!(sd > 0)) return df * intrinsic;
  const d1 = Math.log(F / K) / sd + 0.5 * sd;
  const d2 = d1 - sd;
  const call = F * normCdf(d1) - K * normCdf(d2);
  return df * (o.isCall ? call : call - (F - K));
}

/** Black vega dPrice/dvol (per 1.00 of vol). */
export function blackVega(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const sd = o.vol * Math.sqrt(o.expiry);
  if (!(sd > 0)) return 0;
  const d1 = Math.log(o.forward / o.strike) / sd + 0.5 * sd;
  return df * o.forward * normPdf(d1) * Math.sqrt(o.expiry);
}

/** Bachelier (1900) normal-model price: df·[(F−K)N(d) + σ√T n(d)], d = (F−K)/(σ√T), call; put by parity. */
export function bachelierPrice(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const sd = o.vol * Math.sqrt(o.expiry);
  const m = o.forward - o.strike;
  if (!(sd > 0)) return df * Math.max(o.isCall ? m : -m, 0);
  const d = m / sd;
  const call = m * normCdf(d) + sd * normPdf(d);
  return df * (o.isCall ? call : call - m);
}

/** Bachelier vega dPrice/dσ_N. */
export function bachelierVega(o: ForwardOption & { vol: number }): number {
  const df = o.df ?? 1;
  const sd = o.vol * Math.sqrt(o.expiry);
  if (!(sd > 0)) return 0;
  return df * Math.sqrt(o.expiry) * normPdf((o.forward - o.strike) / sd);
}

/**
 * Black implied vol by a safeguarded Newton iteration on the out-of-the-money option (bisection fallback);
 * returns NaN when the price lies outside the no-arbitrage bounds. Common practice.
 */
export function blackImpliedVol(o: ForwardOption & { price: number }): number {
  const df = o.df ?? 1;
  const F = o.forward;
  const K = o.strike;
  // Work with the out-of-the-money side (parity), undiscounted.
  let p = o.price / df;
  let isCall = o.isCall;
  if (isCall && K < F) {
    p = p - (F - K);
    isCall = false;
  } else if (!isCall && K > F) {
    p = p + (F - K);
    isCall = true;
  }
  const upper = isCall ? F : K;
  if (!(p > 0) || p >= upper) return p === 0 ? 0 : NaN;
  let lo = 1e-8;
  let hi = 10;
  let v = 0.2;
  for (let it = 0; it < 100; it++) {
    const q = blackPrice({ forward: F, strike: K, expiry: o.expiry, isCall, vol: v });
    const diff = q - p;
    if (Math.abs(diff) < 1e-14 * Math.max(1, p)) return v;
    if (diff > 0) hi = v;
    else lo = v;
    const vega = blackVega({ forward: F, strike: K, expiry: o.expiry, isCall, vol: v });
    let next = vega > 1e-300 ? v - diff / vega : NaN;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - v) < 1e-15) return next;
    v = next;
  }
  return v;
}

/** Bachelier implied normal vol by safeguarded Newton (bisection fallback). Common practice. */
export function bachelierImpliedVol(o: ForwardOption & { price: number }): number {
  const df = o.df ?? 1;
  const p = o.price / df;
  const m = o.forward - o.strike;
  const intrinsic = Math.max(o.isCall ? m : -m, 0);
  if (!(p > intrinsic)) return p === intrinsic ? 0 : NaN;
  let lo = 0;
  let hi = 1;
  let v = Math.max(p * Math.sqrt((2 * Math.PI) / o.expiry), 1e-6);
  for (let it = 0; it < 100; it++) {
    const q = bachelierPrice({ ...o, df: 1, vol: v });
    const diff = q - p;
    if (Math.abs(diff) < 1e-16) return v;
    if (diff > 0) hi = v;
    else lo = v;
    const vega = bachelierVega({ ...o, df: 1, vol: v });
    let next = vega > 0 ? v - diff / vega : NaN;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - v) < 1e-17) return next;
    v = next;
  }
  return v;
}
