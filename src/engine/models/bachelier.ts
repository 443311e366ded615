/**
 * Bachelier (normal) model: the forward is Gaussian with absolute vol σ_N (rate units per √year), used for
 * normal-quoted caplets and swaptions. Price (L. Bachelier, 'Théorie de la spéculation', 1900; in the form of
 * P. Jäckel, 'Implied normal volatility', Wilmott, 2017, Sec. 1), with d = (F − K)/(σ_N√T):
 *   call = A[(F − K)Φ(d) + σ_N√T φ(d)],   put = A[(K − F)Φ(−d) + σ_N√T φ(d)],
 * A = annuity or discount factor. Implied normal vol: Newton steps on the out-of-the-money time value
 * v(s) = s[φ(d) + dΦ(d)], d = −|F − K|/s, s = σ_N√T (∂v/∂s = φ(d)), in the log form ln v (well scaled from
 * 1e-300 up), inside a shrinking bracket, growing at most tenfold per step before an upper bound is found.
 */
import { fail, requireFinite, requireNonNegative, requirePositive } from '../errors.ts';
import { normCdf, normPdf } from '../math/normal.ts';
import type { OptionType } from './blackScholes.ts';
import { log } from '../math/detMath.ts';

/** Inputs of a Bachelier option. */
export interface BachelierInput {
  type: OptionType;
  /** Forward (rate or price; may be negative). */
  F: number;
  /** Strike (same units as F; may be negative). */
  K: number;
  /** Years to expiry (> 0). */
  T: number;
  /** Normal vol (units of F per √year, ≥ 0), e.g. 0.0085 = 85 bp for a rate. */
  vol: number;
  /** Annuity or discount factor (default 1). */
  annuity?: number;
}

/** Bachelier price (units of F times the annuity). */
export function bachelierPrice(p: BachelierInput): number {
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', 'bachelier.type', "must be 'call' or 'put'", p.type);
  requireFinite('bachelier.F', p.F);
  requireFinite('bachelier.K', p.K);
  requirePositive('bachelier.T', p.T, 'the option must expire after the valuation date');
  requireNonNegative('bachelier.vol', p.vol, 'normal vol in rate units, e.g. 0.0085 for 85 bp');
  const A = p.annuity ?? 1;
  requirePositive('bachelier.annuity', A);
  const s = p.vol * Math.sqrt(p.T);
  const w = p.type === 'call' ? p.F - p.K : p.K - p.F;
  if (s === 0) return A * Math.max(w, 0);
  const d = w / s;
  return A * (w * normCdf(d) + s * normPdf(d));
}

/** Out-of-the-money time value for s > 0, x = −|F − K| ≤ 0: s φ(x/s) + x Φ(x/s). */
function otmValue(x: number, s: number): number {
  const d = x / s;
  return s * normPdf(d) + x * normCdf(d);
}

/** Implied normal vol (units of F per √year) of a Bachelier price; below-intrinsic prices throw `E_PRICE_ARBITRAGE`. */
export function bachelierImpliedVol(p: Omit<BachelierInput, 'vol'> & { price: number }): number {
  if (p.type !== 'call' && p.type !== 'put')
    fail('E_OPTION_TYPE', 'bachelier.type', "must be 'call' or 'put'", p.type);
  requireFinite('bachelier.F', p.F);
  requireFinite('bachelier.K', p.K);
  requirePositive('bachelier.T', p.T);
  requireFinite('bachelier.price', p.price);
  const A = p.annuity ?? 1;
  requirePositive('bachelier.annuity', A);
  const w = p.type === 'call' ? p.F - p.K : p.K - p.F;
  const intrinsic = Math.max(w, 0);
  const v = p.price / A - intrinsic;
  if (!(v >= 0))
    fail(
      'E_PRICE_ARBITRAGE',
      'bachelier.price',
      `must be at least the intrinsic value ${(A * intrinsic).toPrecision(12)}`,
      p.price,
    );
  if (v === 0) return 0;
  const x = -Math.abs(w);
  if (x === 0) return (v * Math.sqrt(2 * Math.PI)) / Math.sqrt(p.T);
  // Bracket: v(s) ≤ s φ(0) gives s ≥ v√(2π); start from the ATM-like guess.
  let lo = 0;
  let hi = Infinity;
  let s = Math.max(v * Math.sqrt(2 * Math.PI), 1e-300);
  const target = log(v);
  for (let it = 0; it < 100; it++) {
    const val = otmValue(x, s);
    const vega = normPdf(x / s);
    const f = log(val) - target;
    const df = vega / val;
    if (f < 0) lo = Math.max(lo, s);
    else hi = Math.min(hi, s);
    let next = s - f / df;
    if (!(next > lo && next < hi) || !Number.isFinite(next))
      next = Number.isFinite(hi) ? 0.5 * (lo + hi) : 2 * s;
    if (Math.abs(next - s) <= 1e-15 * s) {
      s = next;
      break;
    }
    s = next;
  }
  return s / Math.sqrt(p.T);
}
