/**
 * Parameter stability across a series of snapshots: the ladder is calibrated on every date exactly as a study of that
 * date would calibrate it (the study's assembly, `calibrateLadder`), and each fitted parameter's path, day-to-day
 * changes, coefficient of variation (standard deviation / |mean| of the path), per-date standard error and the fit's
 * condition number are reported beside the fit error (common practice in model validation: parameters that jump
 * while the fit error stays small are poorly identified).
 */
import type { MarketSnapshot } from '../market/types.ts';
import { EngineError, fail } from '../errors.ts';
import {
  calibrateLadder,
  fitHullWhite,
  snapshotLadderBasis,
  type CalibratedLadder,
  type LadderRequest,
} from '../study/ladderCalibration.ts';
import type { HestonCalibration } from './hestonCalibration.ts';
import type { HullWhiteCalibration } from './hullWhiteCalibration.ts';
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

/** One model's fitted parameters on one date, with their standard errors and the fit's diagnostics. */
export interface ParameterFit {
  /** `heston:NAME` or `hull-white:CCY`. */
  model: string;
  /** Parameter values in the order reported (Heston v0, kappa, theta, sigma, rho; Hull–White a, sigma…). */
  parameters: { name: string; value: number; standardError: number }[];
  conditionNumber: number;
  /** Fit RMSE (vol points for equities, the quote's unit — bp or vol points — for rates). */
  fitRmse: number;
}

/** The fits of a series: one entry per date. */
export interface StabilityPoint {
  date: string;
  fits: ParameterFit[];
}

function cv(x: number[]): number {
  const n = x.length;
  if (n < 2) return NaN;
  const m = x.reduce((s, v) => s + v, 0) / n;
  const v = x.reduce((s, y) => s + (y - m) * (y - m), 0) / (n - 1);
  return Math.sqrt(v) / Math.abs(m);
}

function hestonFit(name: string, r: HestonCalibration): ParameterFit {
  return {
    model: `heston:${name}`,
    parameters: (['v0', 'kappa', 'theta', 'sigma', 'rho'] as const).map((k) => ({
      name: k,
      value: r.params[k],
      standardError: r.fit.standardErrors[k] ?? NaN,
    })),
    conditionNumber: r.fit.conditionNumber,
    fitRmse: r.rmseVolPoints,
  };
}

function hullWhiteFit(c: string, r: HullWhiteCalibration): ParameterFit {
  // a, then σ (one value, or one per piece), each with its standard error.
  const sigmas: [string, number][] =
    typeof r.params.sigma === 'number'
      ? [['sigma', r.params.sigma]]
      : r.params.sigma.map((v, i): [string, number] => [`sigma${i}`, v]);
  return {
    model: `hull-white:${c}`,
    parameters: [['a', r.params.a] as [string, number], ...sigmas].map(([k, v]) => ({
      name: k,
      value: v,
      standardError: r.fit.standardErrors[k] ?? NaN,
    })),
    conditionNumber: r.fit.conditionNumber,
    fitRmse: r.rmseVol,
  };
}

/**
 * The parameter fits behind a calibrated ladder: Heston per equity under deterministic rates and Hull–White per
 * currency, each parameter with its standard error.
 */
export function ladderParameterFits(ladder: CalibratedLadder): ParameterFit[] {
  return [
    ...Object.entries(ladder.reports.heston).map(([n, r]) => hestonFit(n, r)),
    ...Object.entries(ladder.reports.hullWhite).map(([c, r]) => hullWhiteFit(c, r)),
  ];
}

/** Parameter paths of a series of fits, in date order (a parameter missing on some date has a shorter path). */
export function stabilityOfFits(points: StabilityPoint[], seconds = 0): StabilityReport {
  if (points.length < 2)
    fail(
      'E_TOO_FEW_SNAPSHOTS',
      'snapshots',
      'must hold at least 2 dates to measure stability',
      points.length,
      'pass a series of market files',
    );
  const series = points.slice().sort((a, b) => a.date.localeCompare(b.date));
  const rec = new Map<string, ParameterPath>();
  for (const pt of series)
    for (const f of pt.fits)
      for (const p of f.parameters) {
        const key = `${f.model}|${p.name}`;
        let path = rec.get(key);
        if (!path) {
          path = {
            model: f.model,
            parameter: p.name,
            dates: [],
            values: [],
            changes: [],
            coefficientOfVariation: NaN,
            standardErrors: [],
            conditionNumbers: [],
            fitRmse: [],
          };
          rec.set(key, path);
        }
        path.dates.push(pt.date);
        path.values.push(p.value);
        path.standardErrors.push(p.standardError);
        path.conditionNumbers.push(f.conditionNumber);
        path.fitRmse.push(f.fitRmse);
      }
  const paths = [...rec.values()].map((p) => ({
    ...p,
    changes: p.values.slice(1).map((v, i) => v - p.values[i]!),
    coefficientOfVariation: cv(p.values),
  }));
  return { dates: series.map((s) => s.date), paths, seconds };
}

/**
 * What to calibrate on every date: either a ladder request without its snapshot (the `calibrate` command: the
 * ladder a study would simulate), or equities and currencies (the app's market screen: Heston per equity under
 * deterministic rates on every quoted expiry, Hull–White per currency on every rate quote, both by the study's
 * assembly).
 */
export type StabilityRequest =
  { ladder: Omit<LadderRequest, 'snapshot'> } | { equities: string[]; currencies?: string[] };

function withDate<T>(date: string, f: () => T): T {
  try {
    return f();
  } catch (e) {
    if (e instanceof EngineError) throw new EngineError(e.code, `${date}: ${e.message}`, e.issues);
    throw e;
  }
}

/** Calibrates the request on every snapshot, in date order, and reports each parameter's path. */
export function calibrationStability(
  snapshots: MarketSnapshot[],
  request: StabilityRequest,
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
  const points: StabilityPoint[] = snapshots.map((s) =>
    withDate(s.date, () => {
      if ('ladder' in request)
        return {
          date: s.date,
          fits: ladderParameterFits(calibrateLadder({ ...request.ladder, snapshot: s })),
        };
      for (const name of request.equities)
        if (!s.equities[name])
          fail(
            'E_UNKNOWN_UNDERLYING',
            `equities.${name}`,
            'must be in every snapshot of the series',
            name,
            'add it to this snapshot or leave it out of the series',
          );
      for (const c of request.currencies ?? [])
        if (!s.rateVols?.[c])
          fail(
            'E_NO_RATE_VOLS',
            `rateVols.${c}`,
            'must be in every snapshot of the series',
            undefined,
            'add the rate vols to this snapshot or leave the currency out',
          );
      const basis = snapshotLadderBasis(s, {
        equities: request.equities,
        ...(request.currencies ? { currencies: request.currencies } : {}),
      });
      const fits: ParameterFit[] = [];
      if (request.equities.length)
        fits.push(
          ...ladderParameterFits(
            calibrateLadder({
              snapshot: s,
              analysis: basis,
              candidates: ['stochVol'],
              required: [],
              mode: 'fair',
              scheme: 'qe',
            }),
          ),
        );
      for (const c of request.currencies ?? [])
        fits.push(hullWhiteFit(c, fitHullWhite(s, c, basis.lastTime).report));
      return { date: s.date, fits };
    }),
  );
  return stabilityOfFits(points, (nowMs() - t0) / 1000);
}
