/**
 * Heston European options of one maturity by the Lewis integral on fixed Gauss–Legendre panels: the route the slice
 * pricer takes where the COS method would need thousands of terms (long expiries with heavy tails, such as
 * Andersen (2008) Case I, whose density has tails so heavy that the COS truncation range must be ±45 in ln S).
 *
 * Formula: A. Lewis, 'A simple option formula for general jump-diffusion and other exponential Lévy processes'
 * (2001), the call price with the contour at Im u = −½ (equation number from memory; the same formula as
 * hestonLewis.ts, which integrates it adaptively):
 *
 *   C = df · [F − (√(FK)/π) ∫₀^∞ Re(e^{iuk} φ(u − i/2)) / (u² + ¼) du],  k = ln(F/K),
 *
 * φ the characteristic function of X = ln(S_T/F_T) (little-trap form, `hestonExponentShiftedGrid`). Puts by parity.
 *
 * Quadrature: 12-point Gauss–Legendre panels of widths ½, 1, 2, 4 and then 8 (the integrand is analytic; the poles of
 * 1/(u² + ¼) at ±i/2 limit the first panels, hence their small width). One pass of φ serves every strike. Per strike,
 * e^{iuk} at the nodes of the constant-width panels comes from one rotation per panel (angle addition: the nodes of
 * every such panel are the same offsets from its midpoint, and the midpoints are equally spaced), so a strike costs
 * O(nodes) multiplications and a fixed number of trigonometric calls.
 *
 * Stop: after a panel ending at U, the rest of the integral is bounded by ∫_U^∞ E(u) du with the envelope
 * E(u) = |φ(u − i/2)|/(u² + ¼); with E decaying at least exponentially beyond U at the rate λ measured over the last
 * panel (ln |φ| of the Heston characteristic function is asymptotically linear or quadratic in −u; common practice),
 * that bound is E(U)/λ. The series stops once df·√(F·K_max)/π · E(U)/λ < tol/4 at two consecutive panel ends.
 */
import { fail, requirePositive } from '../errors.ts';
import { gaussLegendre } from '../math/quadrature.ts';
import { cos, exp, log, sin } from '../math/detMath.ts';
import type { OptionType } from './blackScholes.ts';
import { type HestonMarket, validateHeston } from './heston.ts';
import { hestonExponentShiftedGrid } from './hestonCharFn.ts';

/** Inputs of {@link hestonLewisSlice}: a maturity, strikes and an absolute tolerance. */
export interface HestonLewisSliceInput extends HestonMarket {
  /** Strikes (currency units, > 0). */
  strikes: ArrayLike<number>;
  /** Option type per strike, or one type for all (default 'call'). */
  types?: OptionType | OptionType[];
  /** Target absolute price error (currency units); default 1e-10 × S. */
  tol?: number;
}

/** Prices of a slice by the Lewis integral, with the quadrature used. */
export interface HestonLewisSliceResult {
  prices: number[];
  /** Upper end of the integration range (the integral beyond it is below tol/4 by the tail bound). */
  U: number;
  /** Number of characteristic-function nodes. */
  nodes: number;
  /** Whether the tail bound was met before the node cap (2¹⁵ nodes). */
  converged: boolean;
}

const ORDER = 12;
/** Panel p < 4 has half-width ¼·2^p; the later panels share one half-width ¼·2^level, level 3, 4 or 5. */
const FIRST_PANELS = 4;
const MAX_NODES = 32768;
/** Largest phase change ω·h (radians) across a half panel that 12 Gauss–Legendre points integrate to ~1e-12. */
const MAX_HALF_PHASE = 6;

/** Heston European prices (currency units) of many strikes of one maturity by the Lewis integral on panels. */
export function hestonLewisSlice(input: HestonLewisSliceInput): HestonLewisSliceResult {
  validateHeston('heston', input);
  const strikes = input.strikes;
  if (!strikes || strikes.length === 0)
    fail('E_EMPTY', 'heston.strikes', 'must list at least one strike', strikes);
  let kMax = 0;
  for (let i = 0; i < strikes.length; i++) {
    requirePositive(`heston.strikes[${i}]`, strikes[i]!);
    kMax = Math.max(kMax, strikes[i]!);
  }
  const types = input.types;
  const typeAt = (i: number): OptionType => {
    const t = Array.isArray(types) ? types[i] : (types ?? 'call');
    if (t !== 'call' && t !== 'put')
      fail('E_OPTION_TYPE', `heston.types[${i}]`, "must be 'call' or 'put'", t);
    return t;
  };
  const tol = input.tol ?? 1e-10 * input.S;
  requirePositive('heston.tol', tol);
  const { S, T, r, q, params } = input;
  const F = S * exp((r - q) * T);
  const df = exp(-r * T);
  const rule = gaussLegendre(ORDER);
  const x = rule.nodes;
  const wts = rule.weights;

  // Node data: weighted Re and Im of φ(u − i/2)/(u² + ¼), panel by panel.
  let cr = new Float64Array(256);
  let ci = new Float64Array(256);
  const uu = new Float64Array(ORDER + 1);
  const eRe = new Float64Array(ORDER + 1);
  const eIm = new Float64Array(ORDER + 1);
  const scale = (df * Math.sqrt(F * kMax)) / Math.PI;
  // Phase rate of the integrand: |k| of the strikes plus the slope of Im ln φ (read off the first panels' ends).
  let kAbs = 0;
  for (let i = 0; i < strikes.length; i++) kAbs = Math.max(kAbs, Math.abs(log(F / strikes[i]!)));
  let wideLevel = 5;
  let lo = 0;
  let panels = 0;
  let prevEnv = NaN;
  let prevIm = 0;
  let quiet = 0;
  let converged = false;
  while ((panels + 1) * ORDER <= MAX_NODES) {
    const level = panels < FIRST_PANELS ? panels : wideLevel;
    const half = 0.25 * (1 << level);
    const width = 2 * half;
    const mid = lo + half;
    for (let i = 0; i < ORDER; i++) uu[i] = mid + half * x[i]!;
    uu[ORDER] = lo + width;
    hestonExponentShiftedGrid(params, T, uu, 0.5, eRe, eIm);
    const base = panels * ORDER;
    if (base + ORDER > cr.length) {
      const n2 = 2 * cr.length;
      const a = new Float64Array(n2);
      a.set(cr);
      cr = a;
      const b = new Float64Array(n2);
      b.set(ci);
      ci = b;
    }
    for (let i = 0; i < ORDER; i++) {
      const u = uu[i]!;
      const f = (half * wts[i]! * exp(eRe[i]!)) / (u * u + 0.25);
      cr[base + i] = f * cos(eIm[i]!);
      ci[base + i] = f * sin(eIm[i]!);
    }
    panels++;
    lo += width;
    if (panels === FIRST_PANELS) {
      const rate = kAbs + Math.abs(eIm[ORDER]! - prevIm) / width;
      while (wideLevel > 3 && rate * 0.25 * (1 << wideLevel) > MAX_HALF_PHASE) wideLevel--;
    }
    prevIm = eIm[ORDER]!;
    const env = exp(eRe[ORDER]!) / (lo * lo + 0.25);
    if (panels > FIRST_PANELS && env < prevEnv) {
      const lambda = log(prevEnv / env) / width;
      quiet = (scale * env) / lambda < tol / 4 ? quiet + 1 : 0;
      if (quiet >= 2) {
        converged = true;
        break;
      }
    } else quiet = 0;
    prevEnv = env;
  }

  const prices: number[] = [];
  const nNodes = panels * ORDER;
  // Panel p has half-width h_p = ¼·2^p (p < 4) or 4 (p ≥ 4) = ¼·2^min(p, 4): the node offsets' rotations
  // e^{i h_p x_i k} follow from the first by squaring (e^{2iθ} = (e^{iθ})²).
  const rotR = new Float64Array(ORDER * 6);
  const rotI = new Float64Array(ORDER * 6);
  const wideWidth = 0.5 * (1 << wideLevel);
  for (let s = 0; s < strikes.length; s++) {
    const K = strikes[s]!;
    const k = log(F / K);
    for (let i = 0; i < ORDER; i++) {
      let a = cos(0.25 * x[i]! * k);
      let b = sin(0.25 * x[i]! * k);
      for (let level = 0; level <= wideLevel; level++) {
        rotR[level * ORDER + i] = a;
        rotI[level * ORDER + i] = b;
        const a2 = a * a - b * b;
        b = 2 * a * b;
        a = a2;
      }
    }
    let integral = 0;
    let start = 0;
    let mr = 0;
    let mi = 0;
    let sr = 0;
    let si = 0;
    for (let p = 0; p < panels; p++) {
      const level = p < FIRST_PANELS ? p : wideLevel;
      const half = 0.25 * (1 << level);
      if (p <= FIRST_PANELS) {
        // Midpoint phase directly; from the second constant-width panel on, by rotation through e^{i·width·k}.
        mr = cos((start + half) * k);
        mi = sin((start + half) * k);
        if (p === FIRST_PANELS) {
          sr = cos(wideWidth * k);
          si = sin(wideWidth * k);
        }
      } else {
        const nr = mr * sr - mi * si;
        mi = mr * si + mi * sr;
        mr = nr;
      }
      const off = p * ORDER;
      const ro = level * ORDER;
      let acc = 0;
      for (let i = 0; i < ORDER; i++) {
        const er = mr * rotR[ro + i]! - mi * rotI[ro + i]!;
        const ei = mr * rotI[ro + i]! + mi * rotR[ro + i]!;
        acc += er * cr[off + i]! - ei * ci[off + i]!;
      }
      integral += acc;
      start += 2 * half;
    }
    const call = Math.max(0, df * (F - (Math.sqrt(F * K) / Math.PI) * integral));
    prices.push(typeAt(s) === 'call' ? call : Math.max(0, call - df * (F - K)));
  }
  return { prices, U: lo, nodes: nNodes, converged };
}
