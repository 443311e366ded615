/**
 * A discount curve from pillar data, for use inside the simulation when no richer curve object is supplied:
 * log-discount linear in time between pillars (piecewise-flat instantaneous forwards; common practice), flat
 * zero rate before the first pillar, flat forward after the last.
 */
import type { CurveSpec, DiscountCurve } from '../market/types.ts';
import { fail, requirePositive } from '../errors.ts';

/** Builds a {@link DiscountCurve} from a {@link CurveSpec}; bad pillars raise an EngineError naming `field`. */
export function curveFromSpec(spec: CurveSpec, field = 'curve'): DiscountCurve {
  const times = spec.times ?? [];
  if (!Array.isArray(times) || times.length === 0)
    fail('E_NO_PILLARS', `${field}.times`, 'must list at least one pillar time (years)', times);
  times.forEach((t, i) => {
    requirePositive(`${field}.times[${i}]`, t);
    if (i > 0 && !(t > times[i - 1]!)) fail('E_NOT_INCREASING', `${field}.times[${i}]`, 'must increase', t);
  });
  let logDf: number[];
  if (spec.zeroRates) {
    if (spec.zeroRates.length !== times.length)
      fail('E_LENGTH', `${field}.zeroRates`, `must have ${times.length} entries`, spec.zeroRates.length);
    logDf = spec.zeroRates.map((z, i) => {
      if (!Number.isFinite(z)) fail('E_NOT_FINITE', `${field}.zeroRates[${i}]`, 'must be a finite number', z);
      return -z * times[i]!;
    });
  } else if (spec.discountFactors) {
    if (spec.discountFactors.length !== times.length)
      fail(
        'E_LENGTH',
        `${field}.discountFactors`,
        `must have ${times.length} entries`,
        spec.discountFactors.length,
      );
    logDf = spec.discountFactors.map((d, i) =>
      Math.log(requirePositive(`${field}.discountFactors[${i}]`, d)),
    );
  } else {
    return fail('E_NO_RATES', field, 'must give zeroRates or discountFactors', spec);
  }
  const n = times.length;
  const lnP = (t: number): number => {
    if (t <= 0) return 0;
    if (t <= times[0]!) return (logDf[0]! * t) / times[0]!;
    if (t >= times[n - 1]!) {
      if (n === 1) return (logDf[0]! * t) / times[0]!;
      const f = (logDf[n - 2]! - logDf[n - 1]!) / (times[n - 1]! - times[n - 2]!);
      return logDf[n - 1]! - f * (t - times[n - 1]!);
    }
    let i = 1;
    while (times[i]! < t) i++;
    const w = (t - times[i - 1]!) / (times[i]! - times[i - 1]!);
    return logDf[i - 1]! + w * (logDf[i]! - logDf[i - 1]!);
  };
  const instFwd = (t: number): number => {
    const h = 1e-6;
    return (lnP(Math.max(0, t - h)) - lnP(t + h)) / (t + h - Math.max(0, t - h));
  };
  return {
    currency: spec.currency,
    df: (t) => Math.exp(lnP(t)),
    zero: (t) => (t > 0 ? -lnP(t) / t : instFwd(0)),
    instFwd,
    fwd: (t1, t2) => (Math.exp(lnP(t1) - lnP(t2)) - 1) / (t2 - t1),
  };
}
