/**
 * Which market instruments calibrate the ladder: the vanillas at the deal's dates and near its strike and barrier
 * levels, and the caplets or co-terminal swaptions spanning its exercise/observation dates. Every variant is fitted
 * to the same set, so the comparison measures the factor, not a different fit. Weights are stated in the result.
 * A user override replaces any part.
 */
import type { DealAnalysis } from '../deal/types.ts';
import type { MarketSnapshot } from '../market/types.ts';
import { makeCurve } from '../market/curve.ts';
import { fail } from '../errors.ts';
import { equityForward, gridStrikes } from './volGrid.ts';

/** The chosen quotes of one equity grid. */
export interface EquityCalibrationSet {
  /** Grid cells used by the smile fits (Heston, SVI), with weights. */
  cells: { row: number; col: number; weight: number }[];
  /** Black–Scholes targets: one (expiry, strike) per chosen expiry. */
  bsTargets: { expiry: number; strike: number }[];
  reason: string;
}

/** The chosen rate-vol quotes of one currency (indices into `rateVols[ccy].quotes`). */
export interface RateCalibrationSet {
  quoteIndices: number[];
  reason: string;
}

export interface CalibrationSet {
  equities: Record<string, EquityCalibrationSet>;
  rates: Record<string, RateCalibrationSet>;
  /** How weights were set, in words, for the report. */
  weighting: string;
}

/** Plain description of what the deal observes, when no deal analysis is at hand. */
export interface DealDates {
  /** Observation, exercise and payment dates (years). */
  dates: number[];
  /** Strike and barrier levels per equity (absolute, the equity's currency), or one list for all. */
  strikes?: Record<string, number[]> | number[];
  /** Equities to calibrate (default every equity of the snapshot). */
  equities?: string[];
  /** Currencies whose rates may be stochastic (default every currency with rate vols). */
  currencies?: string[];
}

export interface CalibrationSetOverride {
  equities?: Record<string, Partial<EquityCalibrationSet>>;
  rates?: Record<string, RateCalibrationSet>;
}

function isAnalysis(x: DealAnalysis | DealDates): x is DealAnalysis {
  return (x as DealAnalysis).gridTimes !== undefined;
}

/** Grid expiries bracketing each date (the last at or before and the first at or after), at least two. */
function bracketing(expiries: number[], dates: number[]): number[] {
  const keep = new Set<number>();
  for (const d of dates) {
    let below = -1;
    let above = -1;
    expiries.forEach((T, i) => {
      if (T <= d + 1e-9) below = i;
      if (above < 0 && T >= d - 1e-9) above = i;
    });
    if (below >= 0) keep.add(below);
    if (above >= 0) keep.add(above);
    if (below < 0 && above < 0) keep.add(expiries.length - 1);
  }
  if (keep.size < 2) {
    keep.add(0);
    keep.add(Math.min(1, expiries.length - 1));
  }
  return [...keep].sort((a, b) => a - b);
}

/**
 * Chooses the calibration instruments. Weights: 1 for grid strikes within [0.9·lowest level, 1.1·highest level] of
 * the deal (always including the two strikes around the ATM forward), 0.25 for the other strikes of a chosen expiry
 * (kept so the smile's shape stays pinned); without levels every strike weighs 1. Black–Scholes targets are the
 * deal's first level (or the ATM forward) at each chosen expiry. Rates: caplets fixing up to the deal's last date
 * (and the first beyond); swaptions whose expiry + tenor is within 0.5y of the last date (co-terminal), or every
 * swaption expiring before it when none is co-terminal.
 */
export function chooseCalibrationSet(
  deal: DealAnalysis | DealDates,
  snapshot: MarketSnapshot,
  override: CalibrationSetOverride = {},
): CalibrationSet {
  const dates = isAnalysis(deal)
    ? [...new Set([...deal.gridTimes, ...deal.exercise.times, deal.lastTime])]
        .filter((t) => t > 0)
        .sort((a, b) => a - b)
    : deal.dates.slice().sort((a, b) => a - b);
  if (dates.length === 0) fail('E_NO_DATES', 'deal.dates', 'must hold at least one date > 0 (years)', dates);
  const last = dates[dates.length - 1]!;
  const names = isAnalysis(deal)
    ? deal.equities.map((e) => e.marketName)
    : (deal.equities ?? Object.keys(snapshot.equities));
  const levelsOf = (name: string): number[] => {
    if (isAnalysis(deal)) return [];
    const s = deal.strikes;
    if (!s) return [];
    return Array.isArray(s) ? s : (s[name] ?? []);
  };
  const equities: Record<string, EquityCalibrationSet> = {};
  for (const name of names) {
    const eq = snapshot.equities[name];
    if (!eq)
      fail(
        'E_UNKNOWN_UNDERLYING',
        `equities.${name}`,
        'must be in the market snapshot',
        name,
        `market has ${Object.keys(snapshot.equities).join(', ')}`,
      );
    const curve = makeCurve(snapshot.curves[eq.currency]!, `curves.${eq.currency}`);
    const strikes = gridStrikes(eq);
    const rows = bracketing(eq.vols.expiries, dates);
    const levels = levelsOf(name);
    const cells: EquityCalibrationSet['cells'] = [];
    const bsTargets: EquityCalibrationSet['bsTargets'] = [];
    for (const i of rows) {
      const T = eq.vols.expiries[i]!;
      const F = equityForward(eq, curve, T);
      const lo = levels.length ? Math.min(...levels, F) * 0.9 : -Infinity;
      const hi = levels.length ? Math.max(...levels, F) * 1.1 : Infinity;
      const atmBelow = strikes.filter((K) => K <= F).pop();
      const atmAbove = strikes.find((K) => K >= F);
      strikes.forEach((K, j) => {
        const core = (K >= lo && K <= hi) || K === atmBelow || K === atmAbove;
        cells.push({ row: i, col: j, weight: core ? 1 : 0.25 });
      });
      bsTargets.push({ expiry: T, strike: levels[0] ?? F });
    }
    const o = override.equities?.[name];
    equities[name] = {
      cells: o?.cells ?? cells,
      bsTargets: o?.bsTargets ?? bsTargets,
      reason:
        o?.reason ??
        `expiries ${rows.map((i) => eq.vols.expiries[i]).join(', ')}y bracket the deal's dates; ` +
          (levels.length
            ? `strikes near the levels ${levels.join(', ')} weigh 1, others 0.25`
            : 'all strikes weigh 1'),
    };
  }
  const ccys = isAnalysis(deal) ? deal.currencies : (deal.currencies ?? Object.keys(snapshot.rateVols ?? {}));
  const rates: Record<string, RateCalibrationSet> = {};
  for (const c of ccys) {
    const rv = snapshot.rateVols?.[c];
    if (override.rates?.[c]) {
      rates[c] = override.rates[c]!;
      continue;
    }
    if (!rv) continue;
    let idx: number[];
    let reason: string;
    if (rv.instrument === 'caplet') {
      const order = rv.quotes.map((q, i) => ({ q, i })).sort((a, b) => a.q.expiry - b.q.expiry);
      idx = order.filter((x) => x.q.expiry <= last + 1e-9).map((x) => x.i);
      const beyond = order.find((x) => x.q.expiry > last + 1e-9);
      if (beyond) idx.push(beyond.i);
      reason = `caplets fixing up to ${last}y and the first beyond`;
    } else {
      idx = rv.quotes
        .map((q, i) => ({ q, i }))
        .filter((x) => Math.abs(x.q.expiry + x.q.tenor - last) <= 0.5)
        .map((x) => x.i);
      reason = `co-terminal swaptions ending at ${last}y`;
      if (idx.length < 2) {
        idx = rv.quotes
          .map((q, i) => ({ q, i }))
          .filter((x) => x.q.expiry < last)
          .map((x) => x.i);
        reason = `no co-terminal swaptions: every swaption expiring before ${last}y`;
      }
    }
    if (idx.length < 2) {
      idx = rv.quotes.map((_, i) => i).slice(0, Math.max(2, idx.length));
      reason += ' (fewer than 2: the first quotes added)';
    }
    rates[c] = { quoteIndices: idx, reason };
  }
  return {
    equities,
    rates,
    weighting:
      'equity smiles: weight 1 near the deal levels and the ATM forward, 0.25 elsewhere on chosen expiries; ' +
      'residuals are vega-scaled price errors (≈ implied-vol errors); rate quotes weigh 1',
  };
}
