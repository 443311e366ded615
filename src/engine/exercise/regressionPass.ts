/**
 * Regression pass of Longstaff & Schwartz (2001, 'Valuing American options by simulation: a simple least-squares
 * approach', RFS 14(1), Sec. 2): backward over the exercise dates, regress the realised deflated value of the
 * flows after t_j (under the policy already fitted for later dates) on the basis of the state at t_j, over the
 * eligible paths, and decide exercise where the exercise value beats the fitted continuation value. The realised
 * cash flows, not the fitted values, are carried backwards (their Sec. 2, the step that keeps the bias small).
 *
 * This pass runs on its own paths (its own seed stream) and only fixes the policy; prices come from the pricing
 * pass on independent paths. Its in-sample value is reported too: it uses the same paths to fit and to decide, so
 * it has foresight and is biased the other way from the pricing pass (high for a holder's right).
 */
import { fail } from '../errors.ts';
import { polynomialBasis } from './basis.ts';
import { decides, designColumns, isEligible, undeflatedExercise } from './continuation.ts';
import { solveLeastSquares } from './leastSquares.ts';
import type { BasisSpec, DatePolicy, ExercisePolicy, ExerciseRight, ExerciseSample } from './types.ts';

/** Settings of the regression pass. */
export interface RegressionSettings {
  /** Total polynomial degree of the basis (default 2). */
  degree?: number;
  /** Add the exercise value itself as a regressor (default false). */
  includeExerciseValue?: boolean;
  /** Minimum eligible paths per basis term for a full fit (default 5); below it the degree is lowered. */
  minPathsPerTerm?: number;
  /** Seed label of the regression paths, recorded in the policy. */
  seed: string;
}

/** What the regression pass returns: the policy and the in-sample value on its own paths. */
export interface RegressionResult {
  policy: ExercisePolicy;
  /** Mean deflated value on the regression paths under the fitted policy (foresight bias; for reference only). */
  inSampleValue: number;
}

/** Checks that a sample has the shapes its header promises. */
export function checkSample(sample: ExerciseSample, right: ExerciseRight, field = 'exercise.sample'): void {
  const { nPaths, nDates, nState } = sample;
  if (!(Number.isInteger(nPaths) && nPaths > 0))
    fail('E_EXERCISE_SAMPLE', `${field}.nPaths`, 'must be a positive integer', nPaths);
  if (nDates !== right.times.length)
    fail(
      'E_EXERCISE_SAMPLE',
      `${field}.nDates`,
      `must equal the number of exercise times (${right.times.length})`,
      nDates,
    );
  if (nState !== right.stateNames.length)
    fail(
      'E_EXERCISE_SAMPLE',
      `${field}.nState`,
      `must equal the number of state names (${right.stateNames.length})`,
      nState,
    );
  const want: [string, number, number][] = [
    ['state', sample.state.length, nDates * nState * nPaths],
    ['exerciseValue', sample.exerciseValue.length, nDates * nPaths],
    ['segments', sample.segments.length, (nDates + 1) * nPaths],
    ['deflator', sample.deflator.length, nDates * nPaths],
  ];
  if (sample.alive) want.push(['alive', sample.alive.length, nDates * nPaths]);
  for (const [name, got, expected] of want)
    if (got !== expected) fail('E_EXERCISE_SAMPLE', `${field}.${name}`, `must have length ${expected}`, got);
}

/** Checks an exercise right: times strictly increasing and positive. */
export function checkRight(right: ExerciseRight, field = 'exercise'): void {
  if (right.times.length < 1)
    fail('E_EXERCISE_TIMES', `${field}.times`, 'must hold at least one date', right.times);
  right.times.forEach((t, i) => {
    if (!(Number.isFinite(t) && t > 0 && (i === 0 || t > right.times[i - 1]!)))
      fail('E_EXERCISE_TIMES', `${field}.times[${i}]`, 'must be > 0 and after the previous date', t);
  });
  if (right.holder !== 'holder' && right.holder !== 'issuer')
    fail('E_EXERCISE_HOLDER', `${field}.holder`, "must be 'holder' or 'issuer'", right.holder);
}

/** Terms of total degree ≤ d over the variables that vary at this date. */
function termsFor(basis: BasisSpec, scale: number[], maxDegree: number): number[] {
  const out: number[] = [];
  basis.terms.forEach((t, i) => {
    let deg = 0;
    let ok = true;
    t.exponents.forEach((e, v) => {
      deg += e;
      if (e > 0 && !(scale[v]! > 0)) ok = false;
    });
    if (ok && deg <= maxDegree) out.push(i);
  });
  return out;
}

/** Mean and standard deviation over the chosen paths (two-pass, for accuracy). */
function meanStd(values: Float64Array, idx: Int32Array): { mean: number; sd: number } {
  let s = 0;
  for (let i = 0; i < idx.length; i++) s += values[idx[i]!]!;
  const mean = s / idx.length;
  let q = 0;
  for (let i = 0; i < idx.length; i++) {
    const d = values[idx[i]!]! - mean;
    q += d * d;
  }
  return { mean, sd: Math.sqrt(q / idx.length) };
}

/**
 * Fits an exercise policy on a regression sample (Longstaff & Schwartz 2001, Sec. 2).
 * Bias: the policy is an estimate, hence sub-optimal: a holder's right priced with it on fresh paths is biased
 * low, an issuer's right (the holder's value when the issuer calls) biased high.
 */
export function fitExercisePolicy(
  right: ExerciseRight,
  sample: ExerciseSample,
  settings: RegressionSettings,
): RegressionResult {
  checkRight(right);
  checkSample(sample, right, 'exercise.regressionSample');
  const basis = polynomialBasis(
    right.stateNames,
    settings.degree ?? 2,
    settings.includeExerciseValue ?? false,
  );
  const minPer = settings.minPathsPerTerm ?? 5;
  const holder = right.holder;
  const itm = holder === 'holder' && (right.inTheMoneyOnly ?? true);
  const { nPaths: P, nDates: n, nState } = sample;

  // Y = deflated flows strictly after t_j under the policy for dates > j.
  const y = sample.segments.slice(n * P, (n + 1) * P);
  const dates: DatePolicy[] = new Array(n);
  for (let j = n - 1; j >= 0; j--) {
    const exercise = undeflatedExercise(sample, j);
    const eligible: number[] = [];
    for (let p = 0; p < P; p++) if (isEligible(sample, j, p, holder, itm)) eligible.push(p);
    const idx = Int32Array.from(eligible);
    const nObs = idx.length;
    const mean = new Array<number>(nState).fill(0);
    const scale = new Array<number>(nState).fill(0);
    let exerciseMean = 0;
    let exerciseScale = 0;
    let date: DatePolicy;
    if (nObs === 0) {
      date = {
        time: right.times[j]!,
        fit: 'none',
        nObs,
        mean,
        scale,
        exerciseMean,
        exerciseScale,
        activeTerms: [],
        coefficients: [],
        ridge: 0,
        rmsResidual: 0,
      };
    } else {
      const x = new Float64Array(P);
      for (let v = 0; v < nState; v++) {
        const off = (j * nState + v) * P;
        for (let p = 0; p < P; p++) x[p] = sample.state[off + p]!;
        const ms = meanStd(x, idx);
        mean[v] = ms.mean;
        // A variable that does not vary over the eligible paths (e.g. the short rate under a deterministic curve)
        // is collinear with the constant: drop it at this date.
        scale[v] = ms.sd > 1e-12 * Math.max(1, Math.abs(ms.mean)) ? ms.sd : 0;
      }
      if (basis.includeExerciseValue) {
        const ms = meanStd(exercise, idx);
        exerciseMean = ms.mean;
        exerciseScale = ms.sd > 1e-12 * Math.max(1, Math.abs(ms.mean)) ? ms.sd : 0;
      }
      // Lower the degree until there are enough paths per term (few eligible paths at early dates or deep OTM).
      let deg = basis.degree;
      let active = termsFor(basis, scale, deg);
      const withEv = (t: number[]): number[] =>
        basis.includeExerciseValue && exerciseScale > 0 ? [...t, basis.terms.length] : t;
      while (deg > 0 && nObs < minPer * withEv(active).length) {
        deg--;
        active = termsFor(basis, scale, deg);
      }
      const activeTerms = withEv(active);
      // Design on the eligible paths only.
      const zSub: Float64Array[] = [];
      for (let v = 0; v < nState; v++) {
        const zv = new Float64Array(nObs);
        const sc = scale[v]!;
        if (sc > 0) {
          const m = mean[v]!;
          const inv = 1 / sc;
          const off = (j * nState + v) * P;
          for (let i = 0; i < nObs; i++) zv[i] = (sample.state[off + idx[i]!]! - m) * inv;
        }
        zSub.push(zv);
      }
      const exSub = new Float64Array(nObs);
      for (let i = 0; i < nObs; i++) exSub[i] = exercise[idx[i]!]!;
      const cols = designColumns(basis, activeTerms, zSub, exSub, exerciseMean, exerciseScale);
      const target = new Float64Array(nObs);
      for (let i = 0; i < nObs; i++) {
        const p = idx[i]!;
        target[i] = y[p]! / sample.deflator[j * P + p]!;
      }
      const ls = solveLeastSquares(cols, target);
      date = {
        time: right.times[j]!,
        fit: deg === basis.degree ? 'full' : 'reduced',
        nObs,
        mean,
        scale,
        exerciseMean,
        exerciseScale,
        activeTerms,
        coefficients: Array.from(ls.coefficients),
        ridge: ls.ridge,
        rmsResidual: ls.rmsResidual,
      };
      // Fitted continuation value on the eligible paths (same arithmetic, in the same order, as continuationValues).
      const coef = date.coefficients;
      for (let i = 0; i < nObs; i++) {
        let c = 0;
        for (let t = 0; t < cols.length; t++) c += coef[t]! * cols[t]![i]!;
        const p = idx[i]!;
        if (decides(holder, exercise[p]!, c)) y[p] = sample.exerciseValue[j * P + p]!;
      }
    }
    dates[j] = date;
    const so = j * P;
    for (let p = 0; p < P; p++) y[p] = y[p]! + sample.segments[so + p]!;
  }
  let s = 0;
  for (let p = 0; p < P; p++) s += y[p]!;
  return {
    policy: {
      format: 'factor-triage/exercise-policy@1',
      holder,
      inTheMoneyOnly: itm,
      basis,
      dates,
      regression: { seed: settings.seed, nPaths: P },
    },
    inSampleValue: s / P,
  };
}
