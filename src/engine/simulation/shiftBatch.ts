/**
 * Deterministic re-use of simulated paths for Greeks (no new simulation).
 *
 * - `spotScale[E] = λ`: every level of equity E is multiplied by λ. Exact for Black–Scholes and Heston (their log
 *   dynamics do not depend on the level) and for the grid local vol, whose coordinate is ln(K/F(t)) with F ∝ S0
 *   (a sticky-moneyness surface). Variances are unchanged.
 * - `rateShift[C] = δ` (a parallel shift of C's zero curve): C's short rate +δ on every path; if C is the domestic
 *   currency the discount 1/B(t) is multiplied by e^{−δt}; bonds in C by e^{−δ(T − t)}; equities priced in C by
 *   e^{+δt} (their forward drift); an FX rate by e^{+δt} if C is domestic, e^{−δt} if C is its foreign currency.
 *   Exact for a deterministic curve and for Hull–White (a parallel shift of the curve adds δ to φ(t) and leaves x,
 *   σ and a unchanged, Brigo & Mercurio 2006, Sec. 3.3), with all model parameters held fixed (no re-calibration).
 */
import type { PathBatch, PathShift, VariantSpec } from './types.ts';
import { fail } from '../errors.ts';
import { exp } from '../math/detMath.ts';

function scaleByTime(
  arr: Float64Array,
  times: Float64Array,
  n: number,
  f: (t: number) => number,
): Float64Array {
  const out = new Float64Array(arr.length);
  for (let k = 0; k < times.length; k++) {
    const m = f(times[k]!);
    const o = k * n;
    for (let p = 0; p < n; p++) out[o + p] = arr[o + p]! * m;
  }
  return out;
}

/** A copy of the batch with the shift applied to the affected arrays (the others are shared). */
export function shiftBatch(batch: PathBatch, shift: PathShift, variant: VariantSpec): PathBatch {
  const spot = shift.spotScale ?? {};
  const rate = shift.rateShift ?? {};
  if (Object.keys(spot).length === 0 && Object.keys(rate).length === 0) return batch;
  const n = batch.nPaths;
  const times = batch.times;
  for (const [name, s] of Object.entries(spot)) {
    if (!batch.equity[name])
      fail('E_SHIFT_NAME', `scenario.spotScale.${name}`, 'must name an equity of the variant', name);
    if (!(Number.isFinite(s) && s > 0))
      fail('E_NOT_POSITIVE', `scenario.spotScale.${name}`, 'must be a finite factor > 0', s);
  }
  for (const [ccy, d] of Object.entries(rate)) {
    if (!batch.shortRate[ccy])
      fail('E_SHIFT_NAME', `scenario.rateShift.${ccy}`, 'must name a currency of the variant', ccy);
    if (!Number.isFinite(d))
      fail('E_NOT_FINITE', `scenario.rateShift.${ccy}`, 'must be a finite rate shift', d);
  }
  const eqCcy = new Map(variant.equities.map((e) => [e.name, e.currency]));
  const equity: Record<string, Float64Array> = {};
  for (const [name, arr] of Object.entries(batch.equity)) {
    const lam = spot[name] ?? 1;
    const d = rate[eqCcy.get(name) ?? ''] ?? 0;
    equity[name] = lam === 1 && d === 0 ? arr : scaleByTime(arr, times, n, (t) => lam * exp(d * t));
  }
  const dd = rate[variant.domestic] ?? 0;
  const fx: Record<string, Float64Array> = {};
  for (const x of variant.fx) {
    const arr = batch.fx[x.name]!;
    const g = dd - (rate[x.foreign] ?? 0);
    fx[x.name] = g === 0 ? arr : scaleByTime(arr, times, n, (t) => exp(g * t));
  }
  const shortRate: Record<string, Float64Array> = {};
  for (const [ccy, arr] of Object.entries(batch.shortRate)) {
    const d = rate[ccy] ?? 0;
    if (d === 0) shortRate[ccy] = arr;
    else {
      const out = new Float64Array(arr.length);
      for (let i = 0; i < arr.length; i++) out[i] = arr[i]! + d;
      shortRate[ccy] = out;
    }
  }
  const discount = dd === 0 ? batch.discount : scaleByTime(batch.discount, times, n, (t) => exp(-dd * t));
  const bond = (ccy: string, k: number, T: number, out: Float64Array): void => {
    batch.bond(ccy, k, T, out);
    const d = rate[ccy] ?? 0;
    if (d === 0) return;
    const m = exp(-d * (T - times[k]!));
    for (let p = 0; p < n; p++) out[p] = out[p]! * m;
  };
  return { nPaths: n, times, equity, variance: batch.variance, fx, shortRate, discount, bond };
}
