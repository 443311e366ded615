/**
 * An arbitrage-checked parametrised implied-vol surface: raw SVI per expiry,
 *   w(k) = a + b(ρ(k − m) + √((k − m)² + σ²)),  k = ln(K/F(T)),  w = σ_imp² T
 * (J. Gatheral, "A parsimonious arbitrage-free implied volatility parameterization with application to the
 * valuation of volatility derivatives", Global Derivatives, Madrid 2004; J. Gatheral, A. Jacquier, "Arbitrage-free
 * SVI volatility surfaces", Quantitative Finance 14(1), 2014, eq. (3.1)). Each slice is fitted by the common
 * Levenberg–Marquardt wrapper with, as penalties: a + bσ√(1−ρ²) ≥ 0 (non-negative variance), Lee's wing bound
 * b(1 + |ρ|) ≤ 2 (R. Lee, "The moment formula for implied volatility at extreme strikes", Math. Finance 14, 2004),
 * no butterfly arbitrage g(k) ≥ 0 (Gatheral & Jacquier 2014, eq. (2.1), Lemma 2.2) and no calendar arbitrage
 * w_i(k) ≥ w_{i−1}(k) (Gatheral & Jacquier 2014, Lemma 2.1) on a grid of k. What remains violated after the fit is
 * reported, never hidden. Between expiries w is linear in T at fixed k; before the first, w = (T/T₁) w₁(k).
 */
import type { DiscountCurve, EquityQuote } from '../market/types.ts';
import { issue, type FieldIssue } from '../errors.ts';
import { fitLeastSquares } from './levenbergMarquardt.ts';
import { equityForward, gridStrikes } from './volGrid.ts';
import { log } from '../math/detMath.ts';

/** Raw SVI parameters of one expiry. */
export interface SviSlice {
  expiry: number;
  a: number;
  b: number;
  rho: number;
  m: number;
  sigma: number;
  /** RMSE of the slice fit, vol points. */
  rmseVolPoints: number;
}

export interface SviSurface {
  slices: SviSlice[];
  /** Arbitrage checks on the k grid after the fit (warnings name the expiry and k). */
  warnings: FieldIssue[];
  /** Largest |model − market| vol over the grid, vol points. */
  maxAbsVolPoints: number;
}

/** w(k) of a slice. */
export function sviW(s: Omit<SviSlice, 'expiry' | 'rmseVolPoints'>, k: number): number {
  const x = k - s.m;
  return s.a + s.b * (s.rho * x + Math.sqrt(x * x + s.sigma * s.sigma));
}

/** w′(k) and w″(k) of a slice. */
export function sviDerivatives(
  s: Omit<SviSlice, 'expiry' | 'rmseVolPoints'>,
  k: number,
): { w1: number; w2: number } {
  const x = k - s.m;
  const r = Math.sqrt(x * x + s.sigma * s.sigma);
  return { w1: s.b * (s.rho + x / r), w2: (s.b * s.sigma * s.sigma) / (r * r * r) };
}

/**
 * Gatheral & Jacquier (2014) eq. (2.1): g(k) = (1 − k w′/(2w))² − (w′²/4)(1/w + 1/4) + w″/2; the density of
 * the terminal law is non-negative where g ≥ 0. It is also the denominator of Dupire's formula in total-variance form.
 */
export function butterflyG(w: number, w1: number, w2: number, k: number): number {
  return (1 - (k * w1) / (2 * w)) * (1 - (k * w1) / (2 * w)) - ((w1 * w1) / 4) * (1 / w + 0.25) + w2 / 2;
}

const K_GRID = Array.from({ length: 41 }, (_, i) => -1.5 + (3 * i) / 40);

/** Fits raw SVI to every expiry of the grid, earliest first, each slice kept above the previous one. */
export function fitSviSurface(equity: EquityQuote, curve: DiscountCurve, field = 'equity'): SviSurface {
  const strikes = gridStrikes(equity);
  const slices: SviSlice[] = [];
  const warnings: FieldIssue[] = [];
  let maxAbs = 0;
  equity.vols.expiries.forEach((T, i) => {
    const F = equityForward(equity, curve, T);
    const ks = strikes.map((K) => log(K / F));
    const vols = equity.vols.vols[i]!;
    const prev = slices[slices.length - 1];
    const atm = vols[ks.reduce((best, k, j) => (Math.abs(k) < Math.abs(ks[best]!) ? j : best), 0)]!;
    const starts = prev
      ? [
          {
            a: prev.a * (T / prev.expiry),
            b: prev.b * Math.sqrt(T / prev.expiry),
            rho: prev.rho,
            m: prev.m,
            sigma: prev.sigma,
          },
        ]
      : [];
    starts.push(
      { a: 0.5 * atm * atm * T, b: 0.1 * Math.sqrt(T), rho: -0.5, m: 0, sigma: 0.2 },
      { a: 0.8 * atm * atm * T, b: 0.05 * Math.sqrt(T), rho: -0.8, m: 0.05, sigma: 0.1 },
    );
    const penalties = (p: Readonly<Record<string, number>>) => {
      const s = { a: p.a!, b: p.b!, rho: p.rho!, m: p.m!, sigma: p.sigma! };
      const out: number[] = [];
      out.push(10 * Math.max(0, -(s.a + s.b * s.sigma * Math.sqrt(1 - s.rho * s.rho))));
      out.push(10 * Math.max(0, s.b * (1 + Math.abs(s.rho)) - 2));
      for (const k of K_GRID) {
        const w = sviW(s, k);
        const { w1, w2 } = sviDerivatives(s, k);
        out.push(w > 0 ? 10 * Math.max(0, -butterflyG(w, w1, w2, k)) : 10);
        if (prev) out.push(100 * Math.max(0, sviW(prev, k) - w));
      }
      return out;
    };
    let best: { params: Record<string, number>; cost: number } | null = null;
    for (const st of starts) {
      const fit = fitLeastSquares(
        {
          parameters: [
            { name: 'a', initial: st.a, lower: -2, upper: 4 },
            { name: 'b', initial: Math.max(st.b, 1e-3), lower: 1e-6, upper: 2 },
            { name: 'rho', initial: st.rho, lower: -0.999, upper: 0.999 },
            { name: 'm', initial: st.m, lower: -1.5, upper: 1.5 },
            { name: 'sigma', initial: Math.max(st.sigma, 1e-3), lower: 1e-4, upper: 3 },
          ],
          residuals: (p) => {
            const s = { a: p.a!, b: p.b!, rho: p.rho!, m: p.m!, sigma: p.sigma! };
            const r = ks.map((k, j) => {
              const w = sviW(s, k);
              return (w > 0 ? Math.sqrt(w / T) : -Math.sqrt(-w / T)) - vols[j]!;
            });
            return [...r, ...penalties(p)];
          },
        },
        { maxEvaluations: 600 },
      );
      const cost = fit.residuals.reduce((acc, x) => acc + x * x, 0);
      if (!best || cost < best.cost) best = { params: fit.parameters, cost };
    }
    const p = best!.params;
    const s = { a: p.a!, b: p.b!, rho: p.rho!, m: p.m!, sigma: p.sigma! };
    const errs = ks.map((k, j) => (Math.sqrt(Math.max(sviW(s, k), 0) / T) - vols[j]!) * 100);
    const rmse = Math.sqrt(errs.reduce((acc, e) => acc + e * e, 0) / errs.length);
    maxAbs = Math.max(maxAbs, ...errs.map(Math.abs));
    const slice: SviSlice = { expiry: T, ...s, rmseVolPoints: rmse };
    for (const k of K_GRID) {
      const w = sviW(s, k);
      const { w1, w2 } = sviDerivatives(s, k);
      if (!(w > 0) || butterflyG(w, w1, w2, k) < -1e-6) {
        warnings.push(
          issue(
            'W_SVI_BUTTERFLY',
            `${field}.vols.expiries[${i}]`,
            `fitted SVI slice must have g(k) ≥ 0 (butterfly); fails at k = ${k.toFixed(3)}`,
            T,
            'local vol is floored there',
            'warning',
          ),
        );
        break;
      }
    }
    if (prev)
      for (const k of K_GRID)
        if (w0(prev, k) - sviW(s, k) > 1e-6) {
          warnings.push(
            issue(
              'W_SVI_CALENDAR',
              `${field}.vols.expiries[${i}]`,
              `fitted SVI slice must lie above the previous one (calendar); fails at k = ${k.toFixed(3)}`,
              T,
              'local vol is floored there',
              'warning',
            ),
          );
          break;
        }
    slices.push(slice);
  });
  return { slices, warnings, maxAbsVolPoints: maxAbs };
}

function w0(s: SviSlice, k: number): number {
  return sviW(s, k);
}

/** Total implied variance w(T, k) and its derivatives from the surface (linear in T between slices). */
export function sviSurfaceAt(
  surface: SviSurface,
  T: number,
  k: number,
): { w: number; wT: number; wk: number; wkk: number } {
  const sl = surface.slices;
  const first = sl[0]!;
  if (T <= first.expiry) {
    const f = T / first.expiry;
    const d = sviDerivatives(first, k);
    const w = sviW(first, k);
    return { w: f * w, wT: w / first.expiry, wk: f * d.w1, wkk: f * d.w2 };
  }
  let i = 0;
  while (i + 1 < sl.length && sl[i + 1]!.expiry < T) i++;
  if (i + 1 >= sl.length) {
    // After the last slice: constant forward variance of the last interval (or w/T of the last slice).
    const last = sl[sl.length - 1]!;
    const prev = sl.length > 1 ? sl[sl.length - 2]! : null;
    const wl = sviW(last, k);
    const slope = prev ? (wl - sviW(prev, k)) / (last.expiry - prev.expiry) : wl / last.expiry;
    const d = sviDerivatives(last, k);
    const dp = prev ? sviDerivatives(prev, k) : { w1: 0, w2: 0 };
    const dt = T - last.expiry;
    const span = prev ? last.expiry - prev.expiry : last.expiry;
    return {
      w: wl + slope * dt,
      wT: slope,
      wk: d.w1 + ((d.w1 - dp.w1) / span) * dt,
      wkk: d.w2 + ((d.w2 - dp.w2) / span) * dt,
    };
  }
  const lo = sl[i]!;
  const hi = sl[i + 1]!;
  const lam = (T - lo.expiry) / (hi.expiry - lo.expiry);
  const w0v = sviW(lo, k);
  const w1v = sviW(hi, k);
  const d0 = sviDerivatives(lo, k);
  const d1 = sviDerivatives(hi, k);
  return {
    w: (1 - lam) * w0v + lam * w1v,
    wT: (w1v - w0v) / (hi.expiry - lo.expiry),
    wk: (1 - lam) * d0.w1 + lam * d1.w1,
    wkk: (1 - lam) * d0.w2 + lam * d1.w2,
  };
}
