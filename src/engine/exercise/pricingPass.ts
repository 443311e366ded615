/**
 * Pricing pass: applies a fitted exercise policy, forward in time, to a batch of independent paths and returns
 * mergeable sums. Memory is one batch; batches are merged in order, so a result does not depend on how batches
 * were scheduled.
 *
 * Because the policy was fitted on other paths it is a feasible (hence sub-optimal) stopping rule on these: the
 * estimate is a lower bound in expectation for a holder's right and an upper bound for an issuer's right
 * (Longstaff & Schwartz 2001, the lower-bound result of their convergence section, from memory, for the holder; the issuer's case by the same argument with the
 * objective reversed).
 */
import { continuationValues, decides, isEligible, undeflatedExercise } from './continuation.ts';
import type { ExercisePolicy, ExerciseSample, ExerciseSums } from './types.ts';

/** Per-path outcome of the pricing pass. */
export interface PolicyOutcome {
  /** Deflated holder value per path. */
  values: Float64Array;
  /** Date index (of the sample) at which each path stopped; −1 = never exercised. */
  stoppedAt: Int32Array;
}

/**
 * Applies the policy to a sample whose date j is policy date `dateOffset + j` (the dual pass continues from a later
 * date). Returns the value and stopping date of every path.
 */
export function applyExercisePolicy(
  policy: ExercisePolicy,
  sample: ExerciseSample,
  dateOffset = 0,
): PolicyOutcome {
  const { nPaths: P, nDates: n } = sample;
  const values = new Float64Array(P);
  const stoppedAt = new Int32Array(P).fill(-1);
  const running = new Uint8Array(P).fill(1);
  for (let j = 0; j < n; j++) {
    const so = j * P;
    for (let p = 0; p < P; p++) if (running[p]) values[p] = values[p]! + sample.segments[so + p]!;
    const date = policy.dates[dateOffset + j]!;
    if (date.fit === 'none') continue;
    const exercise = undeflatedExercise(sample, j);
    const cont = continuationValues(policy.basis, date, sample, j, exercise);
    for (let p = 0; p < P; p++) {
      if (!running[p] || !isEligible(sample, j, p, policy.holder, policy.inTheMoneyOnly)) continue;
      if (decides(policy.holder, exercise[p]!, cont[p]!)) {
        values[p] = values[p]! + sample.exerciseValue[so + p]!;
        running[p] = 0;
        stoppedAt[p] = j;
      }
    }
  }
  const so = n * P;
  for (let p = 0; p < P; p++) if (running[p]) values[p] = values[p]! + sample.segments[so + p]!;
  return { values, stoppedAt };
}

/** Sums of one pricing batch (value, value², exercise counts per date). */
export function pricingSums(policy: ExercisePolicy, sample: ExerciseSample): ExerciseSums {
  const { values, stoppedAt } = applyExercisePolicy(policy, sample);
  let sum = 0;
  let sumSq = 0;
  const exercisedAt = new Array<number>(sample.nDates).fill(0);
  for (let p = 0; p < values.length; p++) {
    sum += values[p]!;
    sumSq += values[p]! * values[p]!;
    if (stoppedAt[p]! >= 0) exercisedAt[stoppedAt[p]!]!++;
  }
  return { nPaths: values.length, sum, sumSq, exercisedAt };
}

/** Merges sums of batches in the given order (the order fixes the floating-point result). */
export function mergeExerciseSums(parts: ExerciseSums[]): ExerciseSums {
  const n = parts[0]?.exercisedAt.length ?? 0;
  const out: ExerciseSums = { nPaths: 0, sum: 0, sumSq: 0, exercisedAt: new Array<number>(n).fill(0) };
  for (const s of parts) {
    out.nPaths += s.nPaths;
    out.sum += s.sum;
    out.sumSq += s.sumSq;
    s.exercisedAt.forEach((c, j) => (out.exercisedAt[j] = out.exercisedAt[j]! + c));
  }
  return out;
}

/** Mean and standard error of the mean from sums. */
export function meanAndSe(s: ExerciseSums): { value: number; se: number } {
  const mean = s.sum / s.nPaths;
  const variance = s.nPaths > 1 ? Math.max(0, (s.sumSq - s.nPaths * mean * mean) / (s.nPaths - 1)) : 0;
  return { value: mean, se: Math.sqrt(variance / s.nPaths) };
}
