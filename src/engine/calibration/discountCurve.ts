/**
 * Discount factors from a CurveSpec for the calibration code: log-linear interpolation of discount factors
 * (piecewise-flat forwards between pillars), flat zero rate before the first pillar, flat forward after the last.
 * Common practice. (The market layer owns the curve the study uses; this reader keeps calibration self-contained.)
 */
import type { CurveSpec } from '../market/types.ts';
import { fail } from '../errors.ts';

/** Discount factor function t (years) → P(0,t) of a curve spec. */
export function discountFunction(spec: CurveSpec, field = 'curve'): (t: number) => number {
  const n = spec.times.length;
  if (n === 0) fail('E_CURVE_EMPTY', `${field}.times`, 'must hold at least one pillar', spec.times);
  const lnP: number[] = [];
  for (let i = 0; i < n; i++) {
    const t = spec.times[i]!;
    if (!(t > 0) || (i > 0 && !(t > spec.times[i - 1]!)))
      fail('E_CURVE_TIMES', `${field}.times[${i}]`, 'must be > 0 and strictly increasing', t);
    if (spec.zeroRates) lnP.push(-spec.zeroRates[i]! * t);
    else if (spec.discountFactors) lnP.push(Math.log(spec.discountFactors[i]!));
    else fail('E_CURVE_VALUES', field, 'must give zeroRates or discountFactors', spec);
    if (!Number.isFinite(lnP[i]!)) fail('E_CURVE_VALUES', `${field} pillar ${i}`, 'must be finite', lnP[i]);
  }
  const times = spec.times;
  return (t: number) => {
    if (t <= 0) return 1;
    if (t <= times[0]!) return Math.exp((lnP[0]! * t) / times[0]!);
    if (t >= times[n - 1]!) {
      if (n === 1) return Math.exp((lnP[0]! * t) / times[0]!);
      const f = (lnP[n - 1]! - lnP[n - 2]!) / (times[n - 1]! - times[n - 2]!);
      return Math.exp(lnP[n - 1]! + f * (t - times[n - 1]!));
    }
    let lo = 0;
    let hi = n - 1;
    while (hi - lo > 1) {
      const m = (lo + hi) >> 1;
      if (times[m]! <= t) lo = m;
      else hi = m;
    }
    const w = (t - times[lo]!) / (times[hi]! - times[lo]!);
    return Math.exp(lnP[lo]! + w * (lnP[hi]! - lnP[lo]!));
  };
}
