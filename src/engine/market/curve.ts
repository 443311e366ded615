/**
 * Discount curves from pillars.
 *
 * Interpolation: a cubic spline in y(t) = −ln P(0,t) = t·z(t) through the pillars, so the instantaneous forward
 * f(0,t) = y'(t) is continuous (and so is its slope inside the pillar range). Before the first pillar the zero rate
 * is flat, y(t) = z₁·t; the spline is clamped to y'(t₁) = z₁ there so the forward has no jump at t₁. At the last
 * pillar the spline is natural (y'' = 0), and beyond it the forward is held flat at f(0, t_n).
 * Sources: P. S. Hagan, G. West, "Interpolation methods for curve construction", Applied Mathematical Finance
 * 13(2) (2006) 89–129, §3 (splines on r(t)·t, forward = derivative); the spline system with one clamped and one
 * natural end: C. de Boor, "A Practical Guide to Splines" (Springer 1978), ch. IV (cubic spline interpolation).
 * Note that a spline may give negative or wiggling forwards on badly spaced pillars; it does not enforce
 * positivity (Hagan & West's monotone convex scheme would).
 */
import { EngineError, issue, throwIfErrors, type FieldIssue } from '../errors.ts';
import type { CurveSpec, DiscountCurve } from './types.ts';
import { bracketIndex } from '../math/search.ts';
import { exp, expm1, log } from '../math/detMath.ts';

function num(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

/** Every problem with a curve spec, as issues naming the cell (`curves.DOM.times[3]`). Empty when the spec is valid. */
export function curveIssues(spec: CurveSpec, field = 'curve'): FieldIssue[] {
  const out: FieldIssue[] = [];
  if (typeof spec?.currency !== 'string' || spec.currency.length === 0)
    out.push(issue('E_CURVE_CURRENCY', `${field}.currency`, 'must be a currency code', spec?.currency));
  const times = spec?.times;
  if (!Array.isArray(times) || times.length === 0) {
    out.push(issue('E_CURVE_EMPTY', `${field}.times`, 'must hold at least one pillar time (years)', times));
    return out;
  }
  for (let i = 0; i < times.length; i++) {
    const t = times[i];
    if (!num(t) || t <= 0)
      out.push(issue('E_CURVE_TIME', `${field}.times[${i}]`, 'must be a finite time in years > 0', t));
    else if (i > 0 && num(times[i - 1]) && !(t > times[i - 1]!))
      out.push(
        issue(
          'E_CURVE_ORDER',
          `${field}.times[${i}]`,
          `must be greater than times[${i - 1}] = ${times[i - 1]} (pillars strictly increasing)`,
          t,
          'sort the pillars by time and remove duplicates',
        ),
      );
  }
  const hasZ = spec.zeroRates !== undefined;
  const hasD = spec.discountFactors !== undefined;
  if (hasZ === hasD) {
    out.push(
      issue(
        'E_CURVE_VALUES',
        field,
        'must give exactly one of zeroRates or discountFactors',
        hasZ ? 'both given' : 'neither given',
      ),
    );
    return out;
  }
  const key = hasZ ? 'zeroRates' : 'discountFactors';
  const vals = (hasZ ? spec.zeroRates : spec.discountFactors) as unknown;
  if (!Array.isArray(vals) || vals.length !== times.length) {
    out.push(
      issue(
        'E_CURVE_LENGTH',
        `${field}.${key}`,
        `must have one value per pillar (${times.length})`,
        Array.isArray(vals) ? vals.length : vals,
      ),
    );
    return out;
  }
  for (let i = 0; i < vals.length; i++) {
    const v = vals[i];
    if (!num(v)) out.push(issue('E_NOT_FINITE', `${field}.${key}[${i}]`, 'must be a finite number', v));
    else if (!hasZ && !(v > 0))
      out.push(issue('E_CURVE_DF', `${field}.${key}[${i}]`, 'must be a discount factor > 0', v));
  }
  return out;
}

/** Natural-end, clamped-start cubic spline second derivatives (de Boor 1978, ch. IV; Thomas algorithm). */
function splineSecondDerivatives(x: number[], y: number[], slope0: number): number[] {
  const n = x.length; // n ≥ 2
  const a = new Array<number>(n).fill(0); // sub-diagonal
  const b = new Array<number>(n).fill(0); // diagonal
  const c = new Array<number>(n).fill(0); // super-diagonal
  const d = new Array<number>(n).fill(0);
  const h0 = x[1]! - x[0]!;
  b[0] = 2 * h0;
  c[0] = h0;
  d[0] = 6 * ((y[1]! - y[0]!) / h0 - slope0);
  for (let i = 1; i < n - 1; i++) {
    const hl = x[i]! - x[i - 1]!;
    const hr = x[i + 1]! - x[i]!;
    a[i] = hl;
    b[i] = 2 * (hl + hr);
    c[i] = hr;
    d[i] = 6 * ((y[i + 1]! - y[i]!) / hr - (y[i]! - y[i - 1]!) / hl);
  }
  b[n - 1] = 1; // natural end: M_{n-1} = 0
  d[n - 1] = 0;
  for (let i = 1; i < n; i++) {
    const w = a[i]! / b[i - 1]!;
    b[i] = b[i]! - w * c[i - 1]!;
    d[i] = d[i]! - w * d[i - 1]!;
  }
  const m = new Array<number>(n).fill(0);
  m[n - 1] = d[n - 1]! / b[n - 1]!;
  for (let i = n - 2; i >= 0; i--) m[i] = (d[i]! - c[i]! * m[i + 1]!) / b[i]!;
  return m;
}

/**
 * Builds the discount curve of a spec, after validating it (throws EngineError listing every bad cell).
 * Times in years, rates continuously compounded decimals.
 */
export function makeCurve(spec: CurveSpec, field = 'curve'): DiscountCurve {
  throwIfErrors(curveIssues(spec, field), 'E_CURVE');
  const x = spec.times.slice();
  const y = spec.zeroRates
    ? spec.zeroRates.map((z, i) => z * x[i]!)
    : spec.discountFactors!.map((p) => -log(p));
  const n = x.length;
  const z1 = y[0]! / x[0]!;
  const m = n >= 2 ? splineSecondDerivatives(x, y, z1) : [0];
  const tn = x[n - 1]!;
  // Forward at the last pillar: spline derivative at the right end of the last segment.
  const fEnd =
    n >= 2
      ? (y[n - 1]! - y[n - 2]!) / (tn - x[n - 2]!) + ((tn - x[n - 2]!) * (2 * m[n - 1]! + m[n - 2]!)) / 6
      : z1;

  const segment = (t: number): number => bracketIndex(x, t);
  /** y(t) = −ln P(0,t). */
  function yOf(t: number): number {
    if (t <= x[0]!) return z1 * t;
    if (t >= tn) return y[n - 1]! + fEnd * (t - tn);
    const i = segment(t);
    const h = x[i + 1]! - x[i]!;
    const A = (x[i + 1]! - t) / h;
    const B = (t - x[i]!) / h;
    return A * y[i]! + B * y[i + 1]! + (((A * A * A - A) * m[i]! + (B * B * B - B) * m[i + 1]!) * h * h) / 6;
  }
  /** y'(t) = f(0,t). */
  function dyOf(t: number): number {
    if (t <= x[0]!) return z1;
    if (t >= tn) return fEnd;
    const i = segment(t);
    const h = x[i + 1]! - x[i]!;
    const A = (x[i + 1]! - t) / h;
    const B = (t - x[i]!) / h;
    return (y[i + 1]! - y[i]!) / h + (((1 - 3 * A * A) * m[i]! + (3 * B * B - 1) * m[i + 1]!) * h) / 6;
  }
  return curveFromLogDiscount(spec.currency, field, yOf, dyOf);
}

function checkTime(field: string, t: number): void {
  if (!(typeof t === 'number' && t >= 0 && t < Infinity))
    throw new EngineError(
      'E_CURVE_QUERY_TIME',
      `${field}: time must be a finite number of years >= 0 (got ${t})`,
      [issue('E_CURVE_QUERY_TIME', field, 'time must be a finite number of years >= 0', t)],
    );
}

/** A DiscountCurve from y(t) = −ln P(0,t) and y'(t) = f(0,t). */
function curveFromLogDiscount(
  currency: string,
  field: string,
  yOf: (t: number) => number,
  dyOf: (t: number) => number,
): DiscountCurve {
  return {
    currency,
    df(t: number): number {
      checkTime(field, t);
      return t === 0 ? 1 : exp(-yOf(t));
    },
    zero(t: number): number {
      checkTime(field, t);
      return t === 0 ? dyOf(0) : yOf(t) / t;
    },
    instFwd(t: number): number {
      checkTime(field, t);
      return dyOf(t);
    },
    fwd(t1: number, t2: number): number {
      checkTime(field, t1);
      checkTime(field, t2);
      if (t2 === t1) return dyOf(t1);
      // Simply compounded forward: (P(t1)/P(t2) − 1)/(t2 − t1), via expm1 for accuracy on short periods.
      return expm1(yOf(t2) - yOf(t1)) / (t2 - t1);
    },
  };
}

/** A flat curve: continuously compounded zero rate `rate` at every maturity. */
export function flatCurve(currency: string, rate: number, field = 'curve'): DiscountCurve {
  if (!(typeof rate === 'number' && Number.isFinite(rate)))
    throw new EngineError('E_NOT_FINITE', `${field}.rate must be a finite number (got ${rate})`, [
      issue('E_NOT_FINITE', `${field}.rate`, 'must be a finite number', rate),
    ]);
  return curveFromLogDiscount(
    currency,
    field,
    (t) => rate * t,
    () => rate,
  );
}

/** Parallel shift of zero rates by `delta` (decimal, e.g. 0.0001 = 1 bp): P'(0,t) = P(0,t)·e^{−δt}, f' = f + δ. */
export function shiftedCurve(curve: DiscountCurve, delta: number): DiscountCurve {
  if (!(typeof delta === 'number' && Number.isFinite(delta)))
    throw new EngineError('E_NOT_FINITE', `shift must be a finite number (got ${delta})`, [
      issue('E_NOT_FINITE', 'shift', 'must be a finite number', delta),
    ]);
  return curveFromLogDiscount(
    curve.currency,
    'curve',
    (t) => (t === 0 ? 0 : -log(curve.df(t)) + delta * t),
    (t) => curve.instFwd(t) + delta,
  );
}
