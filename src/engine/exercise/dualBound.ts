/**
 * Dual bound of Andersen & Broadie (2004, 'Primal-dual simulation algorithm for pricing multidimensional American
 * options', Management Science 50(9)), built from the fitted policy with nested simulation.
 *
 * For a holder's right with deflated exercise payoff Z_j (flows up to t_j plus the exercise value), any martingale
 * π with π_0 = 0 gives V_0 ≤ E[max_j (Z_j − π_j)] (the duality of Haugh & Kogan 2004 and Rogers 2002, restated in their Sec. 2).
 * Andersen & Broadie take π from the policy's own value process L_j: π_j = Σ_{i≤j} (L_i − E_{i−1}[L_i]), where
 * E_{i−1}[L_i] is the policy's continuation value C_{i−1} (estimated by inner paths) and L_i = Z_i where the policy
 * exercises, C_i where it continues (their Sec. 3; section numbers here from memory). Writing Q_i for the inner estimate of the deflated flows after
 * t_i, this gives
 *   Z_j − π_j = L̂_0 + D_j,   D_j = [policy continues at j]·(E_j − Q_j) − Σ_{i<j, policy exercises at i} (E_i − Q_i),
 * with L̂_0 the primal estimate and the date after the last exercise date counted with D = −Σ_{i≤n−1, exercise}(·).
 * The bound is L̂_0 + E[max_j D_j]; the duality gap E[max_j D_j] ≥ 0 is estimated on outer paths independent of the
 * pricing paths, with its own standard error. Inner-path noise makes the estimated gap larger, never smaller
 * (Jensen: E[max] of noisy terms), so the bound stays conservative (their discussion of the bias of the nested estimate).
 *
 * Two refinements keep the nested cost and noise down: dates where a holder's exercise value is not positive need
 * no inner paths (below), and {@link DualRefinement} puts more inner paths where the policy is close to
 * indifferent; both keep the bound valid (arguments beside them).
 *
 * For an issuer's right the holder's value is an infimum over stopping times; applying the same result to −Z gives
 * a lower bound L̂_0 − E[max_j D'_j] with D' computed on negated values.
 */
import { continuationValues, decides, isEligible, undeflatedExercise } from './continuation.ts';
import { fail } from '../errors.ts';
import { applyExercisePolicy } from './pricingPass.ts';
import type { ExerciseSource } from './source.ts';
import type { ExercisePolicy, ExerciseSample } from './types.ts';

/**
 * More inner paths where the policy is close to indifferent (where inner-path noise can flip the sign of
 * exercise − continuation, the terms that feed the upward bias of the nested estimate): at (outer path p, date j)
 * with |exercise value − fitted continuation value| ≤ `width` × s_j / √nInner, s_j the date's regression rms
 * residual (both in time-t_j money; s_j / √nInner is the order of the inner estimate's standard error), the inner
 * simulation uses `innerPaths` paths instead of `nInner`.
 *
 * Validity (the bound stays conservative): the sample size at (p, j) is a function of the outer path up to t_j
 * only (the fitted policy and the outer exercise value), fixed before any inner path is drawn. Given the outer path
 * the inner estimate Q_j is then still an unbiased mean of independent inner values, which is all the argument of
 * Andersen & Broadie (2004) for the upward bias of the nested estimator uses; only its variance changes.
 * Allocating inner paths by the outer state follows the spirit of the boundary-distance grouping of Broadie & Cao
 * (2008, 'Improved lower and upper bound algorithms for pricing American options by simulation', Quantitative
 * Finance 8(8), Sec. 4, from memory), which also sorts outer paths by their distance to the fitted boundary.
 */
export interface DualRefinement {
  /** Half-width of the band around the exercise boundary, in units of s_j / √nInner (> 0). */
  width: number;
  /** Inner paths inside the band (≥ nInner). */
  innerPaths: number;
}

/** Settings of the dual pass. */
export interface DualSettings {
  /** Outer paths (their own seed stream). */
  nOuter: number;
  /** Inner paths per outer path and exercise date (outside the band of `nearBoundary`). */
  nInner: number;
  /** Optional refinement near the exercise boundary; absent = `nInner` everywhere. */
  nearBoundary?: DualRefinement;
  /** Seed string of the outer paths. */
  outerSeed: string;
  /** Maps (outer path, date) to the seed string of that inner simulation. */
  innerSeed: (p: number, j: number) => string;
}

/** Raw result of the dual pass: the duality gap and what it cost. */
export interface DualGap {
  gap: number;
  gapSe: number;
  nOuter: number;
  nInner: number;
  /** Inner paths simulated in total. */
  innerPaths: number;
  /** Inner simulations run (outer path × date pairs), and how many of them lay in the band near the boundary. */
  innerRuns: number;
  nearRuns: number;
}

/** Mean deflated value of flows after date j under the policy on inner paths continuing outer path p. */
function innerContinuation(
  source: ExerciseSource,
  policy: ExercisePolicy,
  outer: ExerciseSample,
  j: number,
  p: number,
  nInner: number,
  settings: DualSettings,
): number {
  const inner = source.continueFrom!(outer, j, p, nInner, settings.innerSeed(p, j));
  const { values } = applyExercisePolicy(policy, inner, j + 1);
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i]!;
  return s / values.length;
}

/**
 * Estimates the duality gap of the policy (Andersen & Broadie 2004). The bound is primal + gap for a holder's right
 * and primal − gap for an issuer's right. Throws when the source cannot restart paths from a state.
 */
export function estimateDualGap(
  source: ExerciseSource,
  policy: ExercisePolicy,
  settings: DualSettings,
): DualGap {
  if (!source.continueFrom)
    fail(
      'E_DUAL_UNAVAILABLE',
      'exercise.dual',
      'needs a path source that can restart paths from a state',
      'no restart',
      'omit the dual setting for this source',
    );
  const refine = settings.nearBoundary;
  if (refine) {
    if (!(refine.width > 0 && Number.isFinite(refine.width)))
      fail('E_DUAL_BAND', 'exercise.dual.nearBoundary.width', 'must be a finite number > 0', refine.width);
    if (!(Number.isInteger(refine.innerPaths) && refine.innerPaths >= settings.nInner))
      fail(
        'E_DUAL_BAND',
        'exercise.dual.nearBoundary.innerPaths',
        `must be a whole number ≥ the inner paths elsewhere (${settings.nInner})`,
        refine.innerPaths,
      );
  }
  const outer = source.sample(settings.nOuter, settings.outerSeed);
  const { nPaths: P, nDates: n } = outer;
  const sign = policy.holder === 'holder' ? 1 : -1;
  // Policy decision at every date on every outer path (the stopping rule from j onwards, as if still running), and
  // whether the path lies in the band near the exercise boundary.
  const ex = new Uint8Array(n * P);
  const near = new Uint8Array(n * P);
  for (let j = 0; j < n; j++) {
    const date = policy.dates[j]!;
    if (date.fit === 'none') continue;
    const exercise = undeflatedExercise(outer, j);
    const cont = continuationValues(policy.basis, date, outer, j, exercise);
    const band = refine ? (refine.width * date.rmsResidual) / Math.sqrt(settings.nInner) : -1;
    for (let p = 0; p < P; p++) {
      if (Math.abs(exercise[p]! - cont[p]!) <= band) near[j * P + p] = 1;
      if (
        isEligible(outer, j, p, policy.holder, policy.inTheMoneyOnly) &&
        decides(policy.holder, exercise[p]!, cont[p]!)
      )
        ex[j * P + p] = 1;
    }
  }
  let sum = 0;
  let sumSq = 0;
  let innerCalls = 0;
  let nearCalls = 0;
  let innerTotal = 0;
  for (let p = 0; p < P; p++) {
    let cum = 0; // Σ_{i<j, exercise at i} (E_i − Q_i), signed
    let best = -Infinity;
    for (let j = 0; j < n; j++) {
      const k = j * P + p;
      // Sub-optimality checking (Broadie & Cao 2008, 'Improved lower and upper bound algorithms for pricing American
      // options by simulation', Quantitative Finance 8(8); from memory): a holder never gains by exercising out of
      // the money, so such dates leave the maximum and need no inner paths (π telescopes over them, since there the
      // policy continues and L_i = C_i exactly). A dead deal (knocked out) has nothing left to continue or exercise.
      if (outer.alive && outer.alive[k] === 0) continue;
      if (policy.holder === 'holder' && policy.inTheMoneyOnly && !(outer.exerciseValue[k]! > 0)) continue;
      // Inner sample size: fixed by the outer path's state at t_j (the fitted policy and the exercise value) before
      // any inner path is drawn, so Q_j stays a conditionally unbiased estimate given the outer path up to t_j.
      const nInner = refine && near[k] === 1 ? refine.innerPaths : settings.nInner;
      innerCalls++;
      if (refine && near[k] === 1) nearCalls++;
      innerTotal += nInner;
      const q = sign * innerContinuation(source, policy, outer, j, p, nInner, settings);
      const e = sign * outer.exerciseValue[k]!;
      const exercises = ex[k] === 1;
      const d = (exercises ? 0 : e - q) - cum;
      if (d > best) best = d;
      if (exercises) cum += e - q;
    }
    const dEnd = -cum;
    if (dEnd > best) best = dEnd;
    sum += best;
    sumSq += best * best;
  }
  const gap = sum / P;
  const variance = P > 1 ? Math.max(0, (sumSq - P * gap * gap) / (P - 1)) : 0;
  return {
    gap,
    gapSe: Math.sqrt(variance / P),
    nOuter: P,
    nInner: settings.nInner,
    innerPaths: innerTotal,
    innerRuns: innerCalls,
    nearRuns: nearCalls,
  };
}
