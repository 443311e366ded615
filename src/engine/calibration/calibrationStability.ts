/**
 * Parameter stability across a series of snapshots: each model is calibrated on every date (Heston warm-started
 * from the previous date's fit), and each parameter's path, day-to-day changes, coefficient of variation
 * (standard deviation / |mean| of the path), per-date standard error and the fit's condition number are reported
 * beside the fit error (common practice in model validation: parameters that jump while the fit error stays small
 * are poorly identified).
 */
import type { MarketSnapshot } from '../market/types.ts';
import type { HestonParams } from '../simulation/types.ts';
import { makeCurve } from '../market/curve.ts';
import { fail } from '../errors.ts';
import { calibrateHeston, defaultHestonStarts } from './hestonCalibration.ts';
import { calibrateHullWhite } from './hullWhiteCalibration.ts';
import { gridQuotes } from './volGrid.ts';
import { nowMs } from './clock.ts';

export interface ParameterPath {
  model: string;
  parameter: string;
  dates: string[];
  values: number[];
  /** values[i] − values[i−1]. */
  changes: number[];
  /** Sample standard deviation / |mean| of the values. */
  coefficientOfVariation: number;
  standardErrors: number[];
  conditionNumbers: number[];
  /** Fit RMSE per date (vol points for equities, the quote's unit for rates). */
  fitRmse: number[];
}

export interface StabilityReport {
  dates: string[];
  paths: ParameterPath[];
  seconds: number;
}

function cv(x: number[]): number {
  const n = x.length;
  if (n < 2) return NaN;
  const m = x.reduce((s, v) => s + v, 0) / n;
  const v = x.reduce((s, y) => s + (y - m) * (y - m), 0) / (n - 1);
  return Math.sqrt(v) / Math.abs(m);
}

/** Calibrates Heston per equity and Hull–White per currency on every snapshot, in date order. */
export function calibrationStability(
  snapshots: MarketSnapshot[],
  options: { equities: string[]; currencies?: string[]; hwMode?: 'constant' | 'piecewise' },
): StabilityReport {
  const t0 = nowMs();
  if (snapshots.length < 2)
    fail(
      'E_TOO_FEW_SNAPSHOTS',
      'snapshots',
      'must hold at least 2 dates to measure stability',
      snapshots.length,
      'pass a series of market files',
    );
  const series = snapshots.slice().sort((a, b) => a.date.localeCompare(b.date));
  const dates = series.map((s) => s.date);
  const rec = new Map<string, ParameterPath>();
  const push = (
    model: string,
    parameter: string,
    value: number,
    se: number,
    cond: number,
    rmse: number,
    date: string,
  ) => {
    const key = `${model}|${parameter}`;
    let p = rec.get(key);
    if (!p) {
      p = {
        model,
        parameter,
        dates: [],
        values: [],
        changes: [],
        coefficientOfVariation: NaN,
        standardErrors: [],
        conditionNumbers: [],
        fitRmse: [],
      };
      rec.set(key, p);
    }
    p.dates.push(date);
    p.values.push(value);
    p.standardErrors.push(se);
    p.conditionNumbers.push(cond);
    p.fitRmse.push(rmse);
  };
  const warm: Record<string, HestonParams> = {};
  for (const s of series) {
    for (const name of options.equities) {
      const eq = s.equities[name];
      if (!eq)
        fail(
          'E_UNKNOWN_UNDERLYING',
          `${s.date}: equities.${name}`,
          'must be in every snapshot of the series',
          name,
        );
      const curve = makeCurve(s.curves[eq.currency]!, `curves.${eq.currency}`);
      const quotes = gridQuotes(eq, curve, `equities.${name}`);
      const starts = warm[name] ? [warm[name]!, ...defaultHestonStarts(quotes).slice(0, 1)] : undefined;
      const r = calibrateHeston({ name, equity: eq, curve, ...(starts ? { starts } : {}) });
      warm[name] = r.params;
      for (const k of ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const)
        push(
          `heston:${name}`,
          k,
          r.params[k],
          r.fit.standardErrors[k] ?? NaN,
          r.fit.conditionNumber,
          r.rmseVolPoints,
          s.date,
        );
    }
    for (const c of options.currencies ?? []) {
      const rv = s.rateVols?.[c];
      if (!rv)
        fail(
          'E_NO_RATE_VOLS',
          `${s.date}: rateVols.${c}`,
          'must be in every snapshot of the series',
          undefined,
        );
      const r = calibrateHullWhite({
        currency: c,
        curve: makeCurve(s.curves[c]!, `curves.${c}`),
        rateVols: rv,
        mode: options.hwMode ?? 'constant',
      });
      // a, then σ (one value, or one per piece), each with its standard error.
      const sigmas: [string, number][] =
        typeof r.params.sigma === 'number'
          ? [['sigma', r.params.sigma]]
          : r.params.sigma.map((v, i): [string, number] => [`sigma${i}`, v]);
      for (const [k, v] of [['a', r.params.a] as [string, number], ...sigmas])
        push(
          `hull-white:${c}`,
          k,
          v,
          r.fit.standardErrors[k] ?? NaN,
          r.fit.conditionNumber,
          r.rmseVol,
          s.date,
        );
    }
  }
  const paths = [...rec.values()].map((p) => ({
    ...p,
    changes: p.values.slice(1).map((v, i) => v - p.values[i]!),
    coefficientOfVariation: cv(p.values),
  }));
  return { dates, paths, seconds: (nowMs() - t0) / 1000 };
}
