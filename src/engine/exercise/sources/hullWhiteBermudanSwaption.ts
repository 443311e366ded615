/**
 * Bermudan swaption under one-factor Hull–White as an {@link ExerciseSource}, for Longstaff–Schwartz and the dual
 * bound (the tree in models/hullWhiteTree.ts is its independent reference).
 *
 * Paths: r = x + φ(t), dx = −a x dt + σ dW, x(0) = 0. Between exercise dates the pair (x, Y = ∫x du) is drawn
 * exactly as a joint Gaussian (Glasserman 2003, *Monte Carlo Methods in Financial Engineering*, Sec. 3.3.1;
 * Brigo & Mercurio 2006, Sec. 3.3): over a step h, x' = x e^{−ah} + ε₁, Y' = Y + x B(h) + ε₂ with
 * Var ε₁ = σ² (1 − e^{−2ah})/(2a), Var ε₂ = σ² ∫₀ʰ B(s)² ds, Cov = σ² B(h)²/2, B(h) = (1 − e^{−ah})/a.
 * Deflator: 1/B(t) = exp(−∫r) = P(0,t) exp(−½V(0,t) − Y(t)) since ∫₀ᵗ φ = −ln P(0,t) + ½V(0,t), V(0,t) = Var Y(t)
 * (Brigo & Mercurio 2006, eq. 3.37 in the shifted form), so E[1/B(t)] = P(0,t) exactly.
 * Exercise value at a period start T_k (payer): N·max(1 − Σ_{i>k} c_i P(T_k, T_i | x), 0), c_i = Kτ_i (+1 at T_m),
 * the single-curve swap value (Brigo & Mercurio 2006, Sec. 1.5.3), bonds by makeHullWhite (BM eq. 3.39).
 * State for the regression: the short rate `rate:<ccy>`.
 */
import { fail, requirePositive } from '../../errors.ts';
import type { DiscountCurve } from '../../market/types.ts';
import { makeHullWhite } from '../../models/hullWhite.ts';
import { makeNormalSource, makeUniformStream } from '../../random/index.ts';
import { hwB, hwIntegrals, makeHullWhiteTerms } from '../../simulation/hullWhiteTerms.ts';
import type { ExerciseSource } from '../source.ts';
import type { ExerciseRight, ExerciseSample } from '../types.ts';
import { exp } from '../../math/detMath.ts';

/** A Bermudan swaption under Hull–White (times in years, rates as decimals). */
export interface HullWhiteBermudanSwaptionSpec {
  curve: DiscountCurve;
  a: number;
  /** Constant absolute short-rate vol. */
  sigma: number;
  type: 'payer' | 'receiver';
  /** Exercise dates: each must be the start of a fixed period. */
  exerciseTimes: number[];
  /** Start of the first fixed period. */
  startTime: number;
  /** Fixed payment dates. */
  payTimes: number[];
  strike: number;
  accruals?: number[];
  notional?: number;
  /** Antithetic pairs within the inner paths of the dual bound (default true). */
  innerAntithetic?: boolean;
}

/** Builds the exercise source of a Bermudan swaption under Hull–White. */
export function hullWhiteBermudanSwaptionSource(spec: HullWhiteBermudanSwaptionSpec): ExerciseSource {
  const a = requirePositive('swaption.a', spec.a);
  const sigma = requirePositive('swaption.sigma', spec.sigma);
  const hw = makeHullWhite(spec.curve, { a, sigma });
  const terms = makeHullWhiteTerms({ a, sigma }, 'swaption');
  const notional = spec.notional ?? 1;
  const m = spec.payTimes.length;
  const starts = [spec.startTime, ...spec.payTimes.slice(0, -1)];
  const acc =
    spec.accruals ?? spec.payTimes.map((t, i) => t - (i === 0 ? spec.startTime : spec.payTimes[i - 1]!));
  const times = spec.exerciseTimes;
  const n = times.length;
  // First payment index after each exercise date.
  const firstPay = times.map((t, e) => {
    const k = starts.findIndex((s) => Math.abs(s - t) <= 1e-10 * Math.max(1, t));
    if (k < 0) fail('E_SWAPTION', `swaption.exerciseTimes[${e}]`, 'must be the start of a fixed period', t);
    return k;
  });
  const sign = spec.type === 'payer' ? 1 : -1;
  const ccy = spec.curve.currency;
  const right: ExerciseRight = {
    times: [...times],
    holder: 'holder',
    stateNames: [`rate:${ccy}`],
    inTheMoneyOnly: true,
  };
  const v0 = times.map((t) => terms.V(0, t));
  const df0 = times.map((t) => spec.curve.df(t));
  const phi = times.map((t) => hw.phi(t));

  function simulate(
    nPaths: number,
    seed: string,
    from: number,
    tStart: number,
    x0: number,
    d0: number,
    v0Start: number,
    df0Start: number,
    antithetic = false,
  ): ExerciseSample {
    const nd = n - from;
    const normals = makeNormalSource(makeUniformStream(seed), { antithetic });
    const z1 = new Float64Array(nPaths);
    const z2 = new Float64Array(nPaths);
    const x = new Float64Array(nPaths).fill(x0);
    const y = new Float64Array(nPaths); // ∫ x from tStart
    const state = new Float64Array(nd * nPaths);
    const exerciseValue = new Float64Array(nd * nPaths);
    const deflator = new Float64Array(nd * nPaths);
    let tPrev = tStart;
    for (let k = 0; k < nd; k++) {
      const e = from + k;
      const t = times[e]!;
      const h = t - tPrev;
      const decay = exp(-a * h);
      const b = hwB(a, h);
      const var1 = sigma * sigma * hwB(2 * a, h);
      const var2 = sigma * sigma * hwIntegrals(a, h).intB2;
      const cov = (sigma * sigma * b * b) / 2;
      // Cholesky of the 2×2 step covariance.
      const l11 = Math.sqrt(var1);
      const l21 = l11 > 0 ? cov / l11 : 0;
      const l22 = Math.sqrt(Math.max(0, var2 - l21 * l21));
      normals.fill(z1, 0, nPaths);
      normals.fill(z2, 0, nPaths);
      // Deflator relative to the start: P(0,t)/P(0,tStart) · exp(−½(V(0,t) − V(0,tStart)) − ∫x).
      const base = d0 * (df0[e]! / df0Start) * exp(-0.5 * (v0[e]! - v0Start));
      const off = k * nPaths;
      const kPay = firstPay[e]!;
      for (let p = 0; p < nPaths; p++) {
        const xs = x[p]!;
        const e1 = l11 * z1[p]!;
        const e2 = l21 * z1[p]! + l22 * z2[p]!;
        y[p] = y[p]! + xs * b + e2;
        const xn = xs * decay + e1;
        x[p] = xn;
        const d = base * exp(-y[p]!);
        let bond = 0;
        for (let i = kPay; i < m; i++)
          bond += (spec.strike * acc[i]! + (i === m - 1 ? 1 : 0)) * hw.bond(t, spec.payTimes[i]!, xn);
        const swap = sign * (1 - bond);
        state[off + p] = xn + phi[e]!;
        exerciseValue[off + p] = d * notional * Math.max(swap, 0);
        deflator[off + p] = d;
      }
      tPrev = t;
    }
    return {
      nPaths,
      nDates: nd,
      nState: 1,
      state,
      exerciseValue,
      segments: new Float64Array((nd + 1) * nPaths),
      deflator,
    };
  }

  return {
    right,
    sample: (nPaths, seed) => simulate(nPaths, seed, 0, 0, 0, 1, 0, 1),
    continueFrom: (outer, j, p, nInner, seed) => {
      const k = j * outer.nPaths + p;
      const x0 = outer.state[k]! - phi[j]!;
      return simulate(
        nInner,
        seed,
        j + 1,
        times[j]!,
        x0,
        outer.deflator[k]!,
        v0[j]!,
        df0[j]!,
        spec.innerAntithetic !== false,
      );
    },
  };
}
