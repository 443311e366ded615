/**
 * Bermudan put or call on one equity under Black–Scholes with a flat rate and dividend yield, as an
 * {@link ExerciseSource}: exact lognormal steps between exercise dates (Glasserman 2003, *Monte Carlo Methods in
 * Financial Engineering*, Sec. 3.2.1 (section from memory): S(t+Δ) = S(t) exp((r − q − σ²/2)Δ + σ√Δ Z)), state = the equity
 * level, exercise value max(K − S, 0) (put) or max(S − K, 0) (call), deflated by e^{−rt}. The right is the holder's.
 */
import { fail, requireNonNegative, requirePositive } from '../../errors.ts';
import { makeNormalSource, makeUniformStream } from '../../random/index.ts';
import type { ExerciseSource } from '../source.ts';
import type { ExerciseRight, ExerciseSample } from '../types.ts';
import { exp } from '../../math/detMath.ts';

/** Inputs of a Bermudan equity option (units: money for spot and strike, years for times, decimals per year). */
export interface LognormalBermudanSpec {
  type: 'put' | 'call';
  spot: number;
  strike: number;
  /** Continuously compounded risk-free rate. */
  rate: number;
  /** Continuous dividend yield (default 0). */
  divYield?: number;
  /** Lognormal volatility. */
  vol: number;
  /** Exercise times (years), strictly increasing; the last one is the expiry. */
  exerciseTimes: number[];
  /** Name of the equity for the state (default `eq:S`). */
  name?: string;
  /** Antithetic pairs within each batch (default false). */
  antithetic?: boolean;
  /** Antithetic pairs within the inner paths of the dual bound (default true: it lowers the inner noise that biases
   * the dual bound upwards). */
  innerAntithetic?: boolean;
}

/** Exercise times t_k = k·T/m, k = 1 … m (e.g. 50 dates per year as in Longstaff & Schwartz 2001, Sec. 3). */
export function equallySpacedTimes(maturity: number, count: number): number[] {
  requirePositive('exercise.maturity', maturity);
  if (!(Number.isInteger(count) && count > 0))
    fail('E_EXERCISE_TIMES', 'exercise.count', 'must be a positive integer', count);
  return Array.from({ length: count }, (_, k) => ((k + 1) * maturity) / count);
}

/** Builds the exercise source of a Bermudan equity option under Black–Scholes. */
export function lognormalBermudanSource(spec: LognormalBermudanSpec): ExerciseSource {
  requirePositive('option.spot', spec.spot);
  requirePositive('option.strike', spec.strike);
  requireNonNegative('option.vol', spec.vol);
  if (!Number.isFinite(spec.rate)) fail('E_NOT_FINITE', 'option.rate', 'must be a finite number', spec.rate);
  const q = spec.divYield ?? 0;
  const times = spec.exerciseTimes;
  const n = times.length;
  const right: ExerciseRight = {
    times: [...times],
    holder: 'holder',
    stateNames: [spec.name ?? 'eq:S'],
    inTheMoneyOnly: true,
  };
  const sign = spec.type === 'put' ? 1 : -1;
  const K = spec.strike;

  /** Simulates from level s0 at time tStart over the exercise dates from index `from` on; deflators from `d0`. */
  function simulate(
    nPaths: number,
    seed: string,
    from: number,
    tStart: number,
    start: (p: number) => number,
    antithetic: boolean,
  ): ExerciseSample {
    const nd = n - from;
    const normals = makeNormalSource(makeUniformStream(seed), { antithetic });
    const z = new Float64Array(nPaths);
    const state = new Float64Array(nd * nPaths);
    const exerciseValue = new Float64Array(nd * nPaths);
    const deflator = new Float64Array(nd * nPaths);
    const s = new Float64Array(nPaths);
    for (let p = 0; p < nPaths; p++) s[p] = start(p);
    let tPrev = tStart;
    for (let k = 0; k < nd; k++) {
      const t = times[from + k]!;
      const dt = t - tPrev;
      const drift = (spec.rate - q - 0.5 * spec.vol * spec.vol) * dt;
      const sd = spec.vol * Math.sqrt(dt);
      normals.fill(z, 0, nPaths);
      const df = exp(-spec.rate * t);
      const off = k * nPaths;
      for (let p = 0; p < nPaths; p++) {
        const v = s[p]! * exp(drift + sd * z[p]!);
        s[p] = v;
        state[off + p] = v;
        exerciseValue[off + p] = df * Math.max(sign * (K - v), 0);
        deflator[off + p] = df;
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
    sample: (nPaths, seed) => simulate(nPaths, seed, 0, 0, () => spec.spot, spec.antithetic === true),
    continueFrom: (outer, j, p, nInner, seed) => {
      const s0 = outer.state[j * outer.nPaths + p]!;
      return simulate(nInner, seed, j + 1, times[j]!, () => s0, spec.innerAntithetic !== false);
    },
  };
}
