/**
 * Hull–White calibration: θ(t) reproduces the curve exactly (the model layer builds it from P(0,·), Brigo & Mercurio
 * 2006 eq. 3.34); a and σ (or a and piecewise-constant σ) are fitted to caplet or co-terminal swaption vols.
 * The quote type is honoured: a `normal` quote is turned into a price by Bachelier's formula, a `lognormal` one by
 * Black's (Black 1976), on the curve's forward (caplet) or par swap rate and annuity (swaption). Model prices are the
 * closed forms of the model layer (caplet as bond put, BM eq. 3.41; swaption by Jamshidian 1989).
 * Residuals: (model − market price)/vega of the quote, i.e. first-order vol errors in the quote's unit.
 */
import type { DiscountCurve, RateVolSpec } from '../market/types.ts';
import type { HullWhiteParams } from '../simulation/types.ts';
import { issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import { makeHullWhite } from '../models/hullWhite.ts';
import {
  bachelierImpliedVol,
  bachelierPrice,
  bachelierVega,
  blackImpliedVol,
  blackPrice,
  blackVega,
} from './blackFormulas.ts';
import { fitLeastSquares, type FitParameter, type FitReport } from './levenbergMarquardt.ts';
import { nowMs } from './clock.ts';

/** One rate-vol quote turned into a calibration instrument. */
export interface RateQuote {
  index: number;
  instrument: 'caplet' | 'swaption';
  type: 'normal' | 'lognormal';
  expiry: number;
  tenor: number;
  strike: number;
  /** Forward rate (caplet) or par swap rate (swaption). */
  forward: number;
  /** τ·P(0,T₂) (caplet) or the fixed-leg annuity (swaption). */
  annuity: number;
  payTimes: number[];
  accrual: number;
  vol: number;
  isCall: boolean;
  price: number;
  vega: number;
  field: string;
}

export interface RateFitRow {
  instrument: 'caplet' | 'swaption';
  expiry: number;
  tenor: number;
  strike: number;
  marketVol: number;
  modelVol: number;
  marketPrice: number;
  modelPrice: number;
  priceError: number;
  /** Model − market vol in the quote's points: basis points for normal vols, vol points (0.01) for lognormal. */
  volError: number;
  volErrorUnit: 'bp' | 'vol points';
  field: string;
}

export interface HullWhiteCalibrationInput {
  currency: string;
  curve: DiscountCurve;
  rateVols: RateVolSpec;
  /** `constant` fits a and σ; `piecewise` fits a first (constant σ), then σ on pieces ending at the quote expiries. */
  mode?: 'constant' | 'piecewise';
  /** Hold the mean reversion at this value. */
  fixedA?: number;
  weights?: number[];
  /** Fit tolerance on the RMSE of the vol errors, in the quote's points (default 1 bp normal, 0.5 vol points). */
  tolerance?: number;
  maxEvaluations?: number;
}

export interface HullWhiteCalibration {
  currency: string;
  params: HullWhiteParams;
  fit: FitReport;
  rows: RateFitRow[];
  /** RMSE of the vol errors in the quote's points. */
  rmseVol: number;
  volUnit: 'bp' | 'vol points';
  ok: boolean;
  warnings: FieldIssue[];
  seconds: number;
}

/** Validates the rate-vol block and turns every quote into an instrument with its market price and vega. */
export function rateQuotes(spec: RateVolSpec, curve: DiscountCurve, field: string): RateQuote[] {
  const issues: FieldIssue[] = [];
  if (spec.instrument !== 'caplet' && spec.instrument !== 'swaption')
    issues.push(
      issue('E_RATE_INSTRUMENT', `${field}.instrument`, "must be 'caplet' or 'swaption'", spec.instrument),
    );
  if (spec.type !== 'normal' && spec.type !== 'lognormal')
    issues.push(
      issue(
        'E_QUOTE_TYPE',
        `${field}.type`,
        "must state the quote type: 'normal' or 'lognormal'",
        spec.type ?? null,
        'add "type": "normal" for absolute (bp) vols or "lognormal" for relative vols',
      ),
    );
  if (!Array.isArray(spec.quotes) || spec.quotes.length === 0)
    issues.push(issue('E_NO_QUOTES', `${field}.quotes`, 'must hold at least one quote', spec.quotes));
  throwIfErrors(issues, issues[0]?.code);
  const out: RateQuote[] = [];
  spec.quotes.forEach((q, i) => {
    const f = `${field}.quotes[${i}]`;
    const bad: FieldIssue[] = [];
    if (!(q.expiry > 0)) bad.push(issue('E_RATE_EXPIRY', `${f}.expiry`, 'must be > 0 years', q.expiry));
    if (!(q.tenor > 0)) bad.push(issue('E_RATE_TENOR', `${f}.tenor`, 'must be > 0 years', q.tenor));
    if (!(q.vol > 0 && Number.isFinite(q.vol)))
      bad.push(issue('E_RATE_VOL', `${f}.vol`, 'must be a finite vol > 0', q.vol));
    if (spec.type === 'normal' && q.vol > 0.2)
      bad.push(
        issue(
          'E_RATE_VOL_UNIT',
          `${f}.vol`,
          'looks like a lognormal vol in a normal block (normal vols are absolute, 0.0085 = 85 bp)',
          q.vol,
          'check the block\'s "type"',
        ),
      );
    throwIfErrors(bad);
    let forward: number;
    let annuity: number;
    let payTimes: number[];
    let accrual: number;
    if (spec.instrument === 'caplet') {
      accrual = q.tenor;
      payTimes = [q.expiry + q.tenor];
      const p1 = curve.df(q.expiry);
      const p2 = curve.df(q.expiry + q.tenor);
      forward = (p1 / p2 - 1) / accrual;
      annuity = accrual * p2;
    } else {
      const freq = spec.frequency ?? 1;
      accrual = 1 / freq;
      const n = Math.round(q.tenor * freq);
      if (!(n >= 1) || Math.abs(n - q.tenor * freq) > 1e-9)
        throwIfErrors([
          issue(
            'E_RATE_TENOR',
            `${f}.tenor`,
            `must be a whole number of fixed periods (frequency ${freq})`,
            q.tenor,
          ),
        ]);
      payTimes = Array.from({ length: n }, (_, k) => q.expiry + (k + 1) * accrual);
      annuity = payTimes.reduce((s, t) => s + accrual * curve.df(t), 0);
      forward = (curve.df(q.expiry) - curve.df(payTimes[n - 1]!)) / annuity;
    }
    const strike = q.strike ?? forward;
    if (spec.type === 'lognormal' && !(forward > 0 && strike > 0))
      throwIfErrors([
        issue(
          'E_LOGNORMAL_NEGATIVE',
          f,
          'needs a positive forward and strike for a lognormal vol',
          { forward, strike },
          'quote normal vols for this currency',
        ),
      ]);
    const isCall = strike >= forward;
    const o = { forward, strike, expiry: q.expiry, df: annuity, isCall, vol: q.vol };
    const price = spec.type === 'normal' ? bachelierPrice(o) : blackPrice(o);
    const vega = spec.type === 'normal' ? bachelierVega(o) : blackVega(o);
    out.push({
      index: i,
      instrument: spec.instrument,
      type: spec.type,
      expiry: q.expiry,
      tenor: q.tenor,
      strike,
      forward,
      annuity,
      payTimes,
      accrual,
      vol: q.vol,
      isCall,
      price,
      vega,
      field: f,
    });
  });
  return out;
}

/** Model prices of the rate instruments under Hull–White `hw` on `curve`. */
export function hullWhiteModelPrices(
  hw: HullWhiteParams,
  curve: DiscountCurve,
  quotes: RateQuote[],
): number[] {
  const m = makeHullWhite(curve, hw);
  return quotes.map((q) => {
    if (q.instrument === 'caplet')
      return m.caplet({
        type: q.isCall ? 'cap' : 'floor',
        T1: q.expiry,
        T2: q.expiry + q.tenor,
        strike: q.strike,
        accrual: q.accrual,
      });
    return m.swaption({
      type: q.isCall ? 'payer' : 'receiver',
      expiry: q.expiry,
      payTimes: q.payTimes,
      strike: q.strike,
    });
  });
}

/** Fits Hull–White to one currency's caplet or swaption vols; see the module comment. */
export function calibrateHullWhite(input: HullWhiteCalibrationInput): HullWhiteCalibration {
  const t0 = nowMs();
  const field = `rateVols.${input.currency}`;
  const quotes = rateQuotes(input.rateVols, input.curve, field);
  const mode = input.mode ?? 'constant';
  const nFree = input.fixedA === undefined ? 2 : 1;
  if (quotes.length < nFree)
    throwIfErrors([
      issue(
        'E_TOO_FEW_QUOTES',
        `${field}.quotes`,
        `must hold at least ${nFree} quotes to fit a and σ`,
        quotes.length,
        'add quotes or fix the mean reversion',
      ),
    ]);
  const unit: 'bp' | 'vol points' = input.rateVols.type === 'normal' ? 'bp' : 'vol points';
  const toUnit = unit === 'bp' ? 1e4 : 100;
  const scale = quotes.map((q) => Math.max(q.vega, 1e-12));
  const sigma0 =
    input.rateVols.type === 'normal'
      ? quotes.reduce((s, q) => s + q.vol, 0) / quotes.length
      : quotes.reduce((s, q) => s + q.vol * q.forward, 0) / quotes.length;
  const resid = (hw: HullWhiteParams) => {
    const m = hullWhiteModelPrices(hw, input.curve, quotes);
    return m.map((x, i) => (x - quotes[i]!.price) / scale[i]!);
  };
  const fitConstant = (a0: number) => {
    const params: FitParameter[] = [
      { name: 'a', initial: input.fixedA ?? a0, lower: 1e-4, upper: 1.5, fixed: input.fixedA !== undefined },
      { name: 'sigma', initial: sigma0, lower: 1e-6, upper: 0.2 },
    ];
    return fitLeastSquares(
      { parameters: params, residuals: (p) => resid({ a: p.a!, sigma: p.sigma! }), weights: input.weights },
      { maxEvaluations: input.maxEvaluations ?? 200 },
    );
  };
  const costOf = (f: FitReport) => f.weightedResiduals.reduce((s, x) => s + x * x, 0);
  const constFits = (input.fixedA !== undefined ? [input.fixedA] : [0.05, 0.01, 0.2]).map(fitConstant);
  constFits.sort((x, y) => costOf(x) - costOf(y));
  let fit = constFits[0]!;
  let params: HullWhiteParams = { a: fit.parameters.a!, sigma: fit.parameters.sigma! };
  if (mode === 'piecewise') {
    const times = [...new Set(quotes.map((q) => q.expiry))].sort((x, y) => x - y);
    const a = params.a;
    const s0 = params.sigma as number;
    const pw: FitParameter[] = times.map((_, i) => ({
      name: `sigma${i}`,
      initial: s0,
      lower: 1e-6,
      upper: 0.2,
    }));
    fit = fitLeastSquares(
      {
        parameters: pw,
        residuals: (p) => resid({ a, sigma: times.map((_, i) => p[`sigma${i}`]!), sigmaTimes: times }),
        weights: input.weights,
      },
      { maxEvaluations: input.maxEvaluations ?? 400 },
    );
    params = { a, sigma: times.map((_, i) => fit.parameters[`sigma${i}`]!), sigmaTimes: times };
  }
  const model = hullWhiteModelPrices(params, input.curve, quotes);
  const rows: RateFitRow[] = quotes.map((q, i) => {
    const o = {
      forward: q.forward,
      strike: q.strike,
      expiry: q.expiry,
      df: q.annuity,
      isCall: q.isCall,
      price: model[i]!,
    };
    const mv = q.type === 'normal' ? bachelierImpliedVol(o) : blackImpliedVol(o);
    const err = Number.isFinite(mv) ? mv - q.vol : (model[i]! - q.price) / scale[i]!;
    return {
      instrument: q.instrument,
      expiry: q.expiry,
      tenor: q.tenor,
      strike: q.strike,
      marketVol: q.vol,
      modelVol: mv,
      marketPrice: q.price,
      modelPrice: model[i]!,
      priceError: model[i]! - q.price,
      volError: err * toUnit,
      volErrorUnit: unit,
      field: q.field,
    };
  });
  const rmseVol = Math.sqrt(rows.reduce((s, r) => s + r.volError * r.volError, 0) / rows.length);
  const tol = input.tolerance ?? (unit === 'bp' ? 1 : 0.5);
  const warnings = [...fit.warnings];
  if (rmseVol > tol)
    warnings.push(
      issue(
        'W_FIT_TOLERANCE',
        field,
        `fit RMSE must be ≤ ${tol} ${unit}`,
        Number(rmseVol.toFixed(3)),
        mode === 'constant' ? 'try piecewise-constant σ' : 'check the quotes',
        'warning',
      ),
    );
  return {
    currency: input.currency,
    params,
    fit,
    rows,
    rmseVol,
    volUnit: unit,
    ok: fit.converged && rmseVol <= tol,
    warnings,
    seconds: (nowMs() - t0) / 1000,
  };
}
