/**
 * Evaluates a fitted continuation-value regression (one {@link DatePolicy}) on the paths of a sample, and the
 * exercise decision that follows from it. Shared by the regression pass, the pricing pass and the dual pass, so all
 * three apply the very same rule.
 */
import { evalTerm } from './basis.ts';
import type { BasisSpec, DatePolicy, ExerciseHolder, ExerciseSample } from './types.ts';

/** Exercise value at date j in time-t_j money (deflated value divided by the deflator), over all paths. */
export function undeflatedExercise(sample: ExerciseSample, j: number): Float64Array {
  const { nPaths } = sample;
  const out = new Float64Array(nPaths);
  const off = j * nPaths;
  for (let p = 0; p < nPaths; p++) out[p] = sample.exerciseValue[off + p]! / sample.deflator[off + p]!;
  return out;
}

/**
 * Regressors of the active terms for date `j` (one Float64Array over all paths per active term).
 * @param exercise exercise value in time-t_j money (needed when the basis includes it).
 */
export function designColumns(
  basis: BasisSpec,
  activeTerms: number[],
  z: Float64Array[],
  exercise: Float64Array,
  exerciseMean: number,
  exerciseScale: number,
): Float64Array[] {
  const nPaths = exercise.length;
  return activeTerms.map((t) => {
    const col = new Float64Array(nPaths);
    if (t < basis.terms.length) evalTerm(basis.terms[t]!, z, col);
    else {
      const inv = exerciseScale > 0 ? 1 / exerciseScale : 0;
      for (let p = 0; p < nPaths; p++) col[p] = (exercise[p]! - exerciseMean) * inv;
    }
    return col;
  });
}

/**
 * Fitted continuation value (time-t_j money) of every path at sample date `j` under `date`. One pass over the
 * paths with no allocation per path or term (the pricing and dual passes call this for every date and inner batch).
 */
export function continuationValues(
  basis: BasisSpec,
  date: DatePolicy,
  sample: ExerciseSample,
  j: number,
  exercise: Float64Array,
): Float64Array {
  const P = sample.nPaths;
  const out = new Float64Array(P);
  if (date.fit === 'none') return out;
  const nState = sample.nState;
  const nTerms = basis.terms.length;
  // Flattened factor lists: for active term i, variables vars[off_i .. off_{i+1}) each raised to pows[·].
  const offs: number[] = [0];
  const vars: number[] = [];
  const pows: number[] = [];
  let evTerm = -1;
  date.activeTerms.forEach((t, i) => {
    if (t >= nTerms) evTerm = i;
    else
      basis.terms[t]!.exponents.forEach((e, v) => {
        if (e > 0) {
          vars.push(v);
          pows.push(e);
        }
      });
    offs.push(vars.length);
  });
  const coef = date.coefficients;
  const nAct = coef.length;
  const mean = date.mean;
  const inv = date.scale.map((s) => (s > 0 ? 1 / s : 0));
  const evInv = date.exerciseScale > 0 ? 1 / date.exerciseScale : 0;
  const z = new Float64Array(nState);
  const base = j * nState * P;
  for (let p = 0; p < P; p++) {
    for (let v = 0; v < nState; v++) z[v] = (sample.state[base + v * P + p]! - mean[v]!) * inv[v]!;
    let c = 0;
    for (let i = 0; i < nAct; i++) {
      let f: number;
      if (i === evTerm) f = (exercise[p]! - date.exerciseMean) * evInv;
      else {
        f = 1;
        for (let q = offs[i]!; q < offs[i + 1]!; q++) {
          const zv = z[vars[q]!]!;
          const e = pows[q]!;
          f *= e === 1 ? zv : e === 2 ? zv * zv : zv * zv * zv;
        }
      }
      c += coef[i]! * f;
    }
    out[p] = c;
  }
  return out;
}

/** Whether path p may exercise at date j (alive, and in the money when the holder's right is restricted). */
export function isEligible(
  sample: ExerciseSample,
  j: number,
  p: number,
  holder: ExerciseHolder,
  inTheMoneyOnly: boolean,
): boolean {
  const k = j * sample.nPaths + p;
  if (sample.alive && sample.alive[k] === 0) return false;
  if (holder === 'holder' && inTheMoneyOnly && !(sample.exerciseValue[k]! > 0)) return false;
  return true;
}

/**
 * The exercise rule: a holder exercises when the exercise value exceeds the estimated continuation value; an issuer
 * exercises (calls) when paying the exercise value costs less than letting the deal continue (Longstaff & Schwartz
 * 2001, Sec. 2; for an issuer's right the same rule with the objective reversed).
 */
export function decides(holder: ExerciseHolder, exercise: number, continuation: number): boolean {
  return holder === 'holder' ? exercise > continuation : exercise < continuation;
}
