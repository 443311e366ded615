/**
 * Black–Scholes calibration: one implied vol per expiry (at the chosen strike, ATM-forward by default) and the
 * piecewise-constant forward vols it implies, σ_i² = (σ²_imp,i T_i − σ²_imp,i−1 T_{i−1})/(T_i − T_{i−1})
 * (common practice: additivity of variance). Under Hull–White rates the fair refit solves, expiry by expiry,
 *   σ²_imp,i T_i = ∫_0^{T_i} [σ_S(t)² + 2ρ σ_S(t) b(t,T_i) + b(t,T_i)²] dt,   b(t,T) = σ_r(t) B(t,T),
 * the variance of ln F(T) under the T-forward measure with Gaussian rates (Rabinovitch 1989, J. Financial and
 * Quantitative Analysis 24(4); Brigo & Mercurio 2006, Ch. 13–14), for σ_S on (T_{i−1}, T_i] — a quadratic with
 * one positive root — so every target vanilla is matched exactly.
 */
import type { DiscountCurve, EquityQuote } from '../market/types.ts';
import type { EquityDynamics, HullWhiteParams } from '../simulation/types.ts';
import { EngineError, issue, throwIfErrors } from '../errors.ts';
import { equityForward, gridVolAt } from './volGrid.ts';
import { hwB, hwSigmaAt, integratePieces } from './hullWhiteBondVol.ts';
import { bsHullWhite } from '../models/bsHullWhite.ts';
import { nowMs } from './clock.ts';
import { pow } from '../math/detMath.ts';

/** One vanilla the Black–Scholes term structure must match. */
export interface VolTarget {
  expiry: number;
  strike: number;
  /** Lognormal implied vol of the quote (deterministic-rate convention). */
  vol: number;
}

export type BsDynamics = Extract<EquityDynamics, { kind: 'bs' }>;

export interface BsCalibration {
  dynamics: BsDynamics;
  targets: VolTarget[];
  /** Model − target implied vol per target, vol points, recomputed by a second route (closed-form repricing). */
  repricingErrorPoints: number[];
  seconds: number;
}

/**
 * Targets read from the grid: for each expiry (default the grid's) the vol at `strikes[i]` (a number for all, or one
 * per expiry; default the ATM forward), interpolated as in {@link gridVolAt}.
 */
export function bsTargetsFromGrid(
  equity: EquityQuote,
  curve: DiscountCurve,
  options: { expiries?: number[]; strikes?: number | number[] } = {},
): VolTarget[] {
  const expiries = options.expiries ?? equity.vols.expiries;
  return expiries.map((T, i) => {
    const s = options.strikes;
    const K = s === undefined ? equityForward(equity, curve, T) : typeof s === 'number' ? s : s[i]!;
    return { expiry: T, strike: K, vol: gridVolAt(equity, curve, T, K) };
  });
}

function checkTargets(targets: VolTarget[], field: string): void {
  const issues = [];
  if (targets.length === 0)
    issues.push(issue('E_TOO_FEW_QUOTES', field, 'must hold at least one vanilla', 0));
  targets.forEach((t, i) => {
    if (!(t.expiry > 0))
      issues.push(issue('E_TARGET_EXPIRY', `${field}[${i}].expiry`, 'must be > 0 years', t.expiry));
    if (i > 0 && !(t.expiry > targets[i - 1]!.expiry))
      issues.push(issue('E_TARGET_ORDER', `${field}[${i}].expiry`, 'must be strictly increasing', t.expiry));
    if (!(t.vol > 0)) issues.push(issue('E_TARGET_VOL', `${field}[${i}].vol`, 'must be > 0', t.vol));
  });
  throwIfErrors(issues);
}

/** Piecewise-constant forward vols from implied vols under deterministic rates. */
export function bsForwardVols(targets: VolTarget[], field = 'bs.targets'): BsCalibration {
  const t0 = nowMs();
  checkTargets(targets, field);
  const vols: number[] = [];
  let wPrev = 0;
  let tPrev = 0;
  targets.forEach((t, i) => {
    const w = t.vol * t.vol * t.expiry;
    const fv = (w - wPrev) / (t.expiry - tPrev);
    if (!(fv > 0)) {
      const f = `${field}[${i - 1}..${i}]`;
      const iss = issue(
        'E_NEGATIVE_FORWARD_VARIANCE',
        f,
        `must give total variance σ²T increasing in expiry; between T = ${tPrev} and T = ${t.expiry} it falls`,
        { expiries: [tPrev, t.expiry], totalVariance: [wPrev, w] },
        'these two vols imply a negative forward variance (calendar arbitrage): check the quotes',
      );
      throw new EngineError('E_NEGATIVE_FORWARD_VARIANCE', iss.message, [iss]);
    }
    vols.push(Math.sqrt(fv));
    wPrev = w;
    tPrev = t.expiry;
  });
  const dynamics: BsDynamics = { kind: 'bs', volTimes: targets.map((t) => t.expiry), vols };
  // Second route: integrate the piecewise variance back.
  const errs = targets.map((t) => {
    let v = 0;
    let s = 0;
    dynamics.volTimes.forEach((e, j) => {
      const hi = Math.min(e, t.expiry);
      if (hi > s) v += vols[j]! * vols[j]! * (hi - s);
      s = Math.max(s, e);
    });
    return (Math.sqrt(v / t.expiry) - t.vol) * 100;
  });
  return { dynamics, targets, repricingErrorPoints: errs, seconds: (nowMs() - t0) / 1000 };
}

/**
 * The fair Black–Scholes refit under Hull–White rates (see the module comment). `spot`, `divYield` and `curve` are
 * used only for the independent closed-form repricing check of each target (models layer, `bsHullWhite`).
 */
export function bsHullWhiteRefit(input: {
  targets: VolTarget[];
  hw: HullWhiteParams;
  /** Correlation of the equity with its currency's short rate. */
  rhoSR: number;
  spot: number;
  divYield: number;
  curve: DiscountCurve;
  field?: string;
}): BsCalibration {
  const t0 = nowMs();
  const field = input.field ?? 'bs.targets';
  const { targets, hw, rhoSR } = input;
  checkTargets(targets, field);
  const edges = [0, ...targets.map((t) => t.expiry)];
  const vols: number[] = [];
  targets.forEach((t, i) => {
    const T = t.expiry;
    const b = (u: number) => hwSigmaAt(hw, u) * hwB(hw.a, u, T);
    let known = integratePieces(hw, 0, T, (u) => pow(b(u), 2));
    for (let j = 0; j < i; j++) {
      const lo = edges[j]!;
      const hi = edges[j + 1]!;
      const sj = vols[j]!;
      known += sj * sj * (hi - lo) + 2 * rhoSR * sj * integratePieces(hw, lo, hi, b);
    }
    const lo = edges[i]!;
    const dt = T - lo;
    const B = 2 * rhoSR * integratePieces(hw, lo, T, b);
    const C = t.vol * t.vol * T - known;
    const disc = B * B + 4 * dt * C;
    const root = disc >= 0 ? (-B + Math.sqrt(disc)) / (2 * dt) : NaN;
    if (!(root > 0)) {
      const iss = issue(
        'E_REFIT_NO_VOL',
        `${field}[${i}]`,
        `cannot be matched under Hull–White rates with ρ(S,r) = ${rhoSR}: the rate variance alone exceeds the target between T = ${lo} and T = ${T}`,
        { expiry: T, vol: t.vol, rateVariance: known, sigmaR: hw.sigma },
        'lower the short-rate vol or the correlation, or drop this expiry',
      );
      throw new EngineError('E_REFIT_NO_VOL', iss.message, [iss]);
    }
    vols.push(root);
  });
  const dynamics: BsDynamics = { kind: 'bs', volTimes: targets.map((t) => t.expiry), vols };
  const errs = targets.map((t) => {
    const r = bsHullWhite({
      type: 'call',
      S: input.spot,
      K: t.strike,
      T: t.expiry,
      q: input.divYield,
      curve: input.curve,
      vol: { volTimes: dynamics.volTimes, vols },
      hw,
      rho: rhoSR,
    });
    return (r.effectiveVol - t.vol) * 100;
  });
  return { dynamics, targets, repricingErrorPoints: errs, seconds: (nowMs() - t0) / 1000 };
}
