/**
 * Fair refit of Heston under Hull–White rates. Step 1 fits the H1-HW approximation (Grzelak & Oosterlee 2011) to
 * the vanillas, so its analytic prices match the market. Step 2 (optional) checks the refit by Monte Carlo of the
 * full Heston–Hull–White model on a random stream of its own (fixed seed, never a study's pricing paths); where the
 * full model misses a quote by more than the tolerance, the targets are shifted by the Monte Carlo − approximation
 * gap measured at the current parameters (where the Monte Carlo resolves it: |gap| > 2 standard errors) and the H1-HW fit is repeated (a fixed-point correction, common practice
 * for calibrating through an approximation), up to `maxIterations`. The report says when it stopped without
 * meeting the tolerance.
 */
import type { CurveSpec, DiscountCurve, EquityQuote } from '../market/types.ts';
import type { HestonParams, HullWhiteParams } from '../simulation/types.ts';
import { issue, type FieldIssue } from '../errors.ts';
import { calibrateHeston, type HestonCalibration } from './hestonCalibration.ts';
import { fullModelVanillas } from './fullModelVanillas.ts';
import { gridQuotes, type VolQuote } from './volGrid.ts';
import { nowMs } from './clock.ts';

/** Settings of the Monte Carlo correction of a Heston refit under rates. */
export interface MonteCarloRefitSettings {
  /** Paths per full-model check. */
  paths: number;
  seed: string;
  /**
   * Tolerance on each |full model − market| implied-vol error, vol points (default 0.25); a quote meets it when its
   * error exceeds the analytic fit's own residual by at most the tolerance plus two Monte Carlo standard errors,
   * and only when every Monte Carlo standard error is at most the tolerance (the check can resolve it).
   */
  toleranceVolPoints?: number;
  /** Largest number of Monte Carlo checks (default 3). */
  maxIterations?: number;
  /** Largest time step of the full-model paths, years. */
  maxStep?: number;
}

export interface HestonRefitInput {
  name: string;
  equity: EquityQuote;
  curve: DiscountCurve;
  /** The same curve as a spec (the Monte Carlo check builds its variant from it). */
  curveSpec: CurveSpec;
  currency: string;
  hw: HullWhiteParams;
  rhoSR: number;
  quotes?: VolQuote[];
  weights?: number[];
  /** Heston parameters held fixed in every fit. */
  fixed?: Partial<HestonParams>;
  /** Deterministic-rate Heston fit to start from (its parameters seed the H1-HW fit). */
  start?: HestonParams;
  /** Monte Carlo correction; absent: the analytic H1-HW refit only. */
  monteCarlo?: MonteCarloRefitSettings;
  toleranceVolPoints?: number;
}

export interface RefitIteration {
  iteration: number;
  params: HestonParams;
  /** Largest |Monte Carlo vol − market vol| over the quotes, vol points. */
  maxErrorPoints: number;
  rmseErrorPoints: number;
  /** Largest Monte Carlo standard error of a vol, vol points. */
  maxSePoints: number;
  /** Largest |Monte Carlo vol − H1-HW vol| (the approximation's gap), vol points. */
  maxGapPoints: number;
  /** Largest (|Monte Carlo vol − market| − |analytic fit residual|): the error the approximation adds, vol points. */
  excessErrorPoints: number;
  paths: number;
  seconds: number;
}

export interface HestonRefit {
  params: HestonParams;
  /** The last H1-HW fit (against shifted targets when corrected). */
  analytic: HestonCalibration;
  iterations: RefitIteration[];
  /** 'analytic': H1-HW only; 'met': the full model reprices within tolerance; 'not-met': stopped without it. */
  status: 'analytic' | 'met' | 'not-met';
  warnings: FieldIssue[];
  seconds: number;
}

/** True when every implied-vol standard error (decimals) is at most `tol` vol points. */
function seWithin(volSe: number[], tol: number): boolean {
  return volSe.every((s) => s * 100 <= tol);
}

/** Runs the refit described in the module comment. */
export function refitHestonUnderRates(input: HestonRefitInput): HestonRefit {
  const t0 = nowMs();
  const field = `equities.${input.name}`;
  const quotes = input.quotes ?? gridQuotes(input.equity, input.curve, field);
  const rates = { hw: input.hw, rhoSR: input.rhoSR };
  const starts = input.start ? [input.start] : undefined;
  // Every fit of the refit: the same quotes, weights, rates and fixed parameters; only the starts and targets move.
  const fitFrom = (from: HestonParams[] | undefined, targetShift?: number[]) =>
    calibrateHeston({
      name: input.name,
      equity: input.equity,
      curve: input.curve,
      quotes,
      weights: input.weights,
      rates,
      starts: from,
      fixed: input.fixed,
      ...(targetShift ? { targetShift } : {}),
      toleranceVolPoints: input.toleranceVolPoints,
    });
  let fit = fitFrom(starts);
  const warnings: FieldIssue[] = [...fit.warnings];
  const iterations: RefitIteration[] = [];
  const mc = input.monteCarlo;
  if (!mc)
    return {
      params: fit.params,
      analytic: fit,
      iterations,
      status: 'analytic',
      warnings,
      seconds: (nowMs() - t0) / 1000,
    };
  const tol = mc.toleranceVolPoints ?? 0.25;
  const maxIt = mc.maxIterations ?? 3;
  const shift = new Array<number>(quotes.length).fill(0);
  // Residuals of the first analytic fit against the market (vol points).
  const fitResidual = fit.rows.map((r) => r.volErrorPoints);
  let status: HestonRefit['status'] = 'not-met';
  for (let it = 1; it <= maxIt; it++) {
    const t1 = nowMs();
    const p = fit.params;
    const res = fullModelVanillas({
      name: input.name,
      currency: input.currency,
      spot: input.equity.spot,
      divYield: input.equity.divYield,
      curve: input.curveSpec,
      heston: p,
      hw: input.hw,
      rhoSR: input.rhoSR,
      quotes,
      paths: mc.paths,
      // Same stream at every iteration: the correction then follows the parameters, not the noise.
      seed: `${mc.seed}:calibration-refit:${input.name}`,
      maxStep: mc.maxStep,
    });
    const errs = quotes.map((q, i) => (res.vols[i]! - q.vol) * 100);
    const gaps = quotes.map((q, i) => (res.vols[i]! - fit.rows[i]!.modelVol) * 100);
    const finiteErrs = errs.filter(Number.isFinite);
    const maxErr = Math.max(...finiteErrs.map(Math.abs));
    // A quote is met when the full model misses it by at most what the analytic fit itself left (its residual,
    // the best the model family does) plus the tolerance plus two Monte Carlo standard errors.
    // The check must also resolve the tolerance: every Monte Carlo standard error at most the tolerance.
    const allMet =
      seWithin(res.volSe, tol) &&
      errs.every(
        (e, i) =>
          Number.isFinite(e) && Math.abs(e) <= Math.abs(fitResidual[i]!) + tol + 2 * res.volSe[i]! * 100,
      );
    const rec: RefitIteration = {
      iteration: it,
      params: p,
      maxErrorPoints: maxErr,
      rmseErrorPoints: Math.sqrt(finiteErrs.reduce((s, x) => s + x * x, 0) / Math.max(finiteErrs.length, 1)),
      maxSePoints: Math.max(...res.volSe.map((s) => s * 100)),
      maxGapPoints: Math.max(...gaps.filter(Number.isFinite).map(Math.abs)),
      excessErrorPoints: Math.max(...errs.map((e, i) => Math.abs(e) - Math.abs(fitResidual[i]!))),
      paths: res.paths,
      seconds: (nowMs() - t1) / 1000,
    };
    iterations.push(rec);
    if (finiteErrs.length < errs.length)
      warnings.push(
        issue(
          'W_REFIT_MC_PRICE',
          field,
          'has Monte Carlo prices outside the no-arbitrage bounds for some quotes (no implied vol)',
          errs.length - finiteErrs.length,
          'raise the Monte Carlo path count',
          'warning',
        ),
      );
    if (allMet) {
      status = 'met';
      break;
    }
    if (it === maxIt) break;
    // Full ≈ H1-HW + gap, so fitting H1-HW to market − gap (gap measured at the current parameters) aims the full model
    // at the market. Only gaps the Monte Carlo resolves (|gap| > 2 SE) move a target; the others are noise.
    quotes.forEach((_, i) => {
      const g = res.vols[i]! - fit.rows[i]!.modelVol;
      shift[i] = Number.isFinite(g) && Math.abs(g) > 2 * res.volSe[i]! ? -g : 0;
    });
    fit = fitFrom([p], shift);
  }
  if (status === 'not-met') {
    const last = iterations[iterations.length - 1]!;
    warnings.push(
      issue(
        'W_REFIT_TOLERANCE',
        field,
        `refit under Hull–White rates must reprice every vanilla by Monte Carlo of the full model within ${tol} vol points; stopped after ${iterations.length} checks`,
        Number(last.maxErrorPoints.toFixed(3)),
        'the reported parameters are the best found; raise the path count or the iteration limit, or widen the tolerance',
        'warning',
      ),
    );
  }
  return { params: fit.params, analytic: fit, iterations, status, warnings, seconds: (nowMs() - t0) / 1000 };
}
