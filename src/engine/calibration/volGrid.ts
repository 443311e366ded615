/**
 * Reading an equity implied-vol grid as calibration quotes: absolute strikes, forwards, Black prices and vegas,
 * interpolation of a vol at any (expiry, strike), and the static-arbitrage checks the quotes must pass
 * (call prices decreasing and convex in strike, total variance non-decreasing in expiry at equal forward
 * moneyness: J. Gatheral, "The Volatility Surface", Wiley 2006, Ch. 2 and 3 (conditions on call prices and
 * calendar spreads); common practice).
 */
import type { DiscountCurve, EquityQuote } from '../market/types.ts';
import { equityForward as marketForward } from '../market/equity.ts';
import { issue, type FieldIssue } from '../errors.ts';
import { blackPrice, blackVega } from './blackFormulas.ts';
import { log, pow } from '../math/detMath.ts';

/** One quoted vanilla of the grid, with everything a calibration instrument needs. */
export interface VolQuote {
  /** Row and column in the grid. */
  row: number;
  col: number;
  /** Years. */
  expiry: number;
  /** Absolute strike. */
  strike: number;
  /** Lognormal implied vol (decimal). */
  vol: number;
  forward: number;
  /** Discount factor to expiry in the equity's currency. */
  df: number;
  /** True when the out-of-the-money option is a call (K ≥ F): the one priced and fitted. */
  isCall: boolean;
  /** Discounted Black price of the out-of-the-money option. */
  price: number;
  /** Black vega of that option (per 1.00 of vol). */
  vega: number;
  /** Field path of the quote, for messages. */
  field: string;
}

/** Forward F(0,T) of the equity on its curve (escrowed cash dividends and a yield: the market layer's convention). */
export function equityForward(eq: EquityQuote, curve: DiscountCurve, T: number): number {
  return marketForward(eq, curve, T);
}

/** Absolute strikes of the grid columns. */
export function gridStrikes(eq: EquityQuote): number[] {
  const g = eq.vols;
  if (g.strikes) return g.strikes.slice();
  return (g.moneyness ?? []).map((m) => m * eq.spot);
}

/** All quotes of the grid (every row and column), in row-major order. */
export function gridQuotes(eq: EquityQuote, curve: DiscountCurve, field = 'equity'): VolQuote[] {
  const strikes = gridStrikes(eq);
  const out: VolQuote[] = [];
  eq.vols.expiries.forEach((T, i) => {
    const F = equityForward(eq, curve, T);
    const D = curve.df(T);
    strikes.forEach((K, j) => {
      const vol = eq.vols.vols[i]![j]!;
      const isCall = K >= F;
      const o = { forward: F, strike: K, expiry: T, df: D, isCall, vol };
      out.push({
        row: i,
        col: j,
        expiry: T,
        strike: K,
        vol,
        forward: F,
        df: D,
        isCall,
        price: blackPrice(o),
        vega: blackVega(o),
        field: `${field}.vols.vols[${i}][${j}]`,
      });
    });
  });
  return out;
}

/**
 * Static-arbitrage issues of a grid, each naming the offending quotes: strictly positive vols, undiscounted
 * call prices c(K) with −1 ≤ c′(K) ≤ 0 and c convex (butterflies ≥ 0), and total implied variance σ²T
 * non-decreasing in T at equal ln(K/F) (calendar spreads ≥ 0, checked by linear interpolation in ln(K/F) of the
 * later row inside its range). `tol` is the price tolerance relative to the forward (default 1e-7).
 */
export function gridArbitrageIssues(
  eq: EquityQuote,
  curve: DiscountCurve,
  field = 'equity',
  tol = 1e-7,
): FieldIssue[] {
  const issues: FieldIssue[] = [];
  const g = eq.vols;
  const strikes = gridStrikes(eq);
  if (g.vols.length !== g.expiries.length)
    return [
      issue(
        'E_GRID_SHAPE',
        `${field}.vols.vols`,
        `must have one row per expiry (${g.expiries.length})`,
        g.vols.length,
      ),
    ];
  for (let i = 0; i < g.expiries.length; i++) {
    const row = g.vols[i]!;
    if (row.length !== strikes.length)
      return [
        issue(
          'E_GRID_SHAPE',
          `${field}.vols.vols[${i}]`,
          `must have one vol per strike (${strikes.length})`,
          row.length,
        ),
      ];
    if (i > 0 && !(g.expiries[i]! > g.expiries[i - 1]!))
      issues.push(
        issue(
          'E_GRID_EXPIRIES',
          `${field}.vols.expiries[${i}]`,
          'must be strictly increasing',
          g.expiries[i],
        ),
      );
    row.forEach((v, j) => {
      if (!(v > 0 && Number.isFinite(v)))
        issues.push(issue('E_GRID_VOL', `${field}.vols.vols[${i}][${j}]`, 'must be a finite vol > 0', v));
    });
  }
  for (let j = 1; j < strikes.length; j++)
    if (!(strikes[j]! > strikes[j - 1]!))
      issues.push(
        issue('E_GRID_STRIKES', `${field}.vols strikes[${j}]`, 'must be strictly increasing', strikes[j]),
      );
  if (issues.length) return issues;
  const T = g.expiries;
  const fwd = T.map((t) => equityForward(eq, curve, t));
  for (let i = 0; i < T.length; i++) {
    const F = fwd[i]!;
    const c = strikes.map((K, j) =>
      blackPrice({ forward: F, strike: K, expiry: T[i]!, isCall: true, vol: g.vols[i]![j]! }),
    );
    const eps = tol * F;
    for (let j = 1; j < strikes.length; j++) {
      const slope = (c[j]! - c[j - 1]!) / (strikes[j]! - strikes[j - 1]!);
      if (slope > eps / (strikes[j]! - strikes[j - 1]!) || slope < -1 - 1e-9)
        issues.push(
          issue(
            'E_STATIC_ARBITRAGE',
            `${field}.vols.vols[${i}][${j - 1}..${j}]`,
            'must give call prices decreasing in strike with slope ≥ −1 (call spread arbitrage)',
            [g.vols[i]![j - 1], g.vols[i]![j]],
            'correct or remove one of these quotes',
          ),
        );
    }
    for (let j = 1; j + 1 < strikes.length; j++) {
      const k0 = strikes[j - 1]!;
      const k1 = strikes[j]!;
      const k2 = strikes[j + 1]!;
      const bfly = c[j - 1]! * (k2 - k1) - c[j]! * (k2 - k0) + c[j + 1]! * (k1 - k0);
      if (bfly < -eps * (k2 - k0))
        issues.push(
          issue(
            'E_STATIC_ARBITRAGE',
            `${field}.vols.vols[${i}][${j - 1}..${j + 1}]`,
            'must give call prices convex in strike (butterfly arbitrage)',
            [g.vols[i]![j - 1], g.vols[i]![j], g.vols[i]![j + 1]],
            'correct or remove one of these quotes',
          ),
        );
    }
  }
  for (let i = 1; i < T.length; i++) {
    const kPrev = strikes.map((K) => log(K / fwd[i - 1]!));
    const kNext = strikes.map((K) => log(K / fwd[i]!));
    for (let j = 0; j < strikes.length; j++) {
      const k = kPrev[j]!;
      if (k < kNext[0]! || k > kNext[kNext.length - 1]!) continue;
      let m = 0;
      while (m + 1 < kNext.length - 1 && kNext[m + 1]! < k) m++;
      const w = (k - kNext[m]!) / (kNext[m + 1]! - kNext[m]!);
      const wNext =
        (1 - w) * (g.vols[i]![m]! * g.vols[i]![m]!) * T[i]! +
        w * (g.vols[i]![m + 1]! * g.vols[i]![m + 1]!) * T[i]!;
      const wPrev = g.vols[i - 1]![j]! * g.vols[i - 1]![j]! * T[i - 1]!;
      if (wNext < wPrev - 1e-6)
        issues.push(
          issue(
            'E_STATIC_ARBITRAGE',
            `${field}.vols.vols[${i - 1}][${j}] vs row ${i}`,
            'must have total variance σ²T non-decreasing in expiry at equal ln(K/F) (calendar arbitrage)',
            { earlier: g.vols[i - 1]![j], laterNear: [g.vols[i]![m], g.vols[i]![m + 1]] },
            'correct or remove one of these quotes',
          ),
        );
    }
  }
  return issues;
}

/**
 * Implied vol at any (T, K) from the grid: linear in ln(K/F) within a row (flat outside), linear in total
 * variance between rows at equal ln(K/F) (flat vol before the first and after the last row). Common practice.
 */
export function gridVolAt(eq: EquityQuote, curve: DiscountCurve, T: number, K: number): number {
  const g = eq.vols;
  const strikes = gridStrikes(eq);
  const rowVol = (i: number, k: number) => {
    const F = equityForward(eq, curve, g.expiries[i]!);
    const ks = strikes.map((s) => log(s / F));
    if (k <= ks[0]!) return g.vols[i]![0]!;
    if (k >= ks[ks.length - 1]!) return g.vols[i]![ks.length - 1]!;
    let m = 0;
    while (ks[m + 1]! < k) m++;
    const w = (k - ks[m]!) / (ks[m + 1]! - ks[m]!);
    return (1 - w) * g.vols[i]![m]! + w * g.vols[i]![m + 1]!;
  };
  const k = log(K / equityForward(eq, curve, T));
  const E = g.expiries;
  if (T <= E[0]!) return rowVol(0, k);
  if (T >= E[E.length - 1]!) return rowVol(E.length - 1, k);
  let i = 0;
  while (E[i + 1]! < T) i++;
  const w0 = pow(rowVol(i, k), 2) * E[i]!;
  const w1 = pow(rowVol(i + 1, k), 2) * E[i + 1]!;
  const w = (T - E[i]!) / (E[i + 1]! - E[i]!);
  return Math.sqrt(Math.max(((1 - w) * w0 + w * w1) / T, 0));
}
