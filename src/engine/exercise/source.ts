/**
 * The interface a model (or the deal layer) implements so that the regression, pricing and dual passes can draw
 * paths. It is the whole contract between early exercise and whatever generates the paths.
 */
import type { ExerciseRight, ExerciseSample } from './types.ts';

/** A generator of exercise samples for one right under one model. */
export interface ExerciseSource {
  /** The right being priced (dates, who holds it, state names). */
  readonly right: ExerciseRight;
  /**
   * Simulates `nPaths` paths from time 0, drawing from the stream seeded by `seed` (a string from `batchSeed`).
   * Must be a pure function of (nPaths, seed).
   */
  sample(nPaths: number, seed: string): ExerciseSample;
  /**
   * For the dual bound: simulates `nInner` continuations of path `p` of `outer` from its state at exercise date `j`.
   * The returned sample covers exercise dates j+1 … n−1 (so it has n−1−j dates and n−j segments: segment 0 holds the
   * flows in (t_j, t_{j+1}]), and its money is deflated to time 0 along the outer path (the inner deflators start
   * from the outer deflator at t_j). Absent when the model cannot restart from a state; the dual bound is then
   * unavailable.
   */
  continueFrom?(outer: ExerciseSample, j: number, p: number, nInner: number, seed: string): ExerciseSample;
}
