/**
 * The Hull–White bond-price volatility b(t,T) = σ(t)·B(t,T), B(t,T) = (1 − e^{−a(T−t)})/a, that enters every
 * equity-under-rates formula of the calibration (D. Brigo, F. Mercurio, "Interest Rate Models — Theory and
 * Practice", 2nd ed., Springer 2006, eq. 3.39: dP(t,T)/P = r dt − σ B(t,T) dW). σ may be piecewise constant.
 */
import type { HullWhiteParams } from '../simulation/types.ts';
import { gaussLegendre } from '../math/quadrature.ts';
import { hwB as hwTau } from '../simulation/hullWhiteTerms.ts';

/** B(t,T) = (1 − e^{−a(T−t)})/a (years); the a → 0 limit is T − t (the simulation layer's B(τ) at τ = T − t). */
export function hwB(a: number, t: number, T: number): number {
  return hwTau(a, T - t);
}

/** σ(u) of a piecewise-constant HW vol: sigma[i] on (sigmaTimes[i−1], sigmaTimes[i]], flat after the last. */
export function hwSigmaAt(p: HullWhiteParams, u: number): number {
  if (typeof p.sigma === 'number') return p.sigma;
  const times = p.sigmaTimes ?? [];
  for (let i = 0; i < times.length; i++) if (u <= times[i]!) return p.sigma[i]!;
  return p.sigma[p.sigma.length - 1]!;
}

const RULE = gaussLegendre(24);

/**
 * ∫_lo^hi f(t) dt split at the σ breakpoints of `hw` and at `extraCuts`, by 24-point Gauss–Legendre per piece
 * (the integrands used here are smooth on each piece).
 */
export function integratePieces(
  hw: HullWhiteParams | undefined,
  lo: number,
  hi: number,
  f: (t: number) => number,
  extraCuts: readonly number[] = [],
): number {
  const cuts = [
    lo,
    ...[...(hw?.sigmaTimes ?? []), ...extraCuts].filter((x) => x > lo && x < hi).sort((a, b) => a - b),
    hi,
  ];
  let s = 0;
  for (let i = 0; i + 1 < cuts.length; i++) {
    const a = cuts[i]!;
    const b = cuts[i + 1]!;
    if (!(b > a)) continue;
    const h = 0.5 * (b - a);
    const c = 0.5 * (b + a);
    for (let k = 0; k < RULE.nodes.length; k++) s += RULE.weights[k]! * h * f(c + h * RULE.nodes[k]!);
  }
  return s;
}
