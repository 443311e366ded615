/**
 * Joins exercise samples of the same right path-wise (sample 0's paths first), so that the regression pass can
 * draw its paths batch by batch: only the exercise-date arrays (paths × dates × state size) are kept, never the
 * full simulated paths of all regression paths at once.
 */
import { fail } from '../errors.ts';
import type { ExerciseSample } from './types.ts';

/** Concatenates samples with equal dates and state size along the path axis. */
export function concatSamples(parts: ExerciseSample[]): ExerciseSample {
  if (parts.length === 0) fail('E_EXERCISE_SAMPLE', 'exercise.samples', 'must hold at least one sample', 0);
  if (parts.length === 1) return parts[0]!;
  const { nDates, nState } = parts[0]!;
  parts.forEach((s, i) => {
    if (s.nDates !== nDates || s.nState !== nState)
      fail(
        'E_EXERCISE_SAMPLE',
        `exercise.samples[${i}]`,
        `must have ${nDates} dates and ${nState} state variables`,
        [s.nDates, s.nState],
      );
  });
  const P = parts.reduce((s, x) => s + x.nPaths, 0);
  const anyAlive = parts.some((s) => s.alive);
  const out: ExerciseSample = {
    nPaths: P,
    nDates,
    nState,
    state: new Float64Array(nDates * nState * P),
    exerciseValue: new Float64Array(nDates * P),
    segments: new Float64Array((nDates + 1) * P),
    deflator: new Float64Array(nDates * P),
  };
  if (anyAlive) out.alive = new Uint8Array(nDates * P);
  let at = 0;
  for (const s of parts) {
    const n = s.nPaths;
    for (let r = 0; r < nDates * nState; r++) out.state.set(s.state.subarray(r * n, (r + 1) * n), r * P + at);
    for (let r = 0; r < nDates; r++) {
      out.exerciseValue.set(s.exerciseValue.subarray(r * n, (r + 1) * n), r * P + at);
      out.deflator.set(s.deflator.subarray(r * n, (r + 1) * n), r * P + at);
      if (out.alive) {
        if (s.alive) out.alive.set(s.alive.subarray(r * n, (r + 1) * n), r * P + at);
        else out.alive.fill(1, r * P + at, r * P + at + n);
      }
    }
    for (let r = 0; r <= nDates; r++) out.segments.set(s.segments.subarray(r * n, (r + 1) * n), r * P + at);
    at += n;
  }
  return out;
}
