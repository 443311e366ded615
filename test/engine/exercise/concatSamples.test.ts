import { describe, it, expect } from 'vitest';
import { concatSamples } from '../../../src/engine/exercise/concatSamples.ts';
import type { ExerciseSample } from '../../../src/engine/exercise/types.ts';

/** A sample whose every entry encodes (array, date or segment, variable, path) so positions can be checked. */
function coded(nPaths: number, tag: number, alive: boolean): ExerciseSample {
  const nDates = 3;
  const nState = 2;
  const f = (len: number, k: number) => Float64Array.from({ length: len }, (_, i) => tag * 1e6 + k * 1e4 + i);
  return {
    nPaths,
    nDates,
    nState,
    state: f(nDates * nState * nPaths, 1),
    exerciseValue: f(nDates * nPaths, 2),
    segments: f((nDates + 1) * nPaths, 3),
    deflator: f(nDates * nPaths, 4),
    ...(alive ? { alive: Uint8Array.from({ length: nDates * nPaths }, (_, i) => i % 2) } : {}),
  };
}

describe('concatSamples', () => {
  it('puts the paths of the second sample after those of the first in every array, date by date', () => {
    // common practice: concatenation along the path axis of time-major arrays.
    const a = coded(4, 1, true);
    const b = coded(3, 2, false);
    const c = concatSamples([a, b]);
    expect(c.nPaths).toBe(7);
    for (let j = 0; j < 3; j++) {
      for (let p = 0; p < 4; p++) expect(c.exerciseValue[j * 7 + p]).toBe(a.exerciseValue[j * 4 + p]);
      for (let p = 0; p < 3; p++) expect(c.exerciseValue[j * 7 + 4 + p]).toBe(b.exerciseValue[j * 3 + p]);
      for (let v = 0; v < 2; v++)
        for (let p = 0; p < 3; p++)
          expect(c.state[(j * 2 + v) * 7 + 4 + p]).toBe(b.state[(j * 2 + v) * 3 + p]);
      // A part without alive flags counts as alive everywhere.
      for (let p = 0; p < 3; p++) expect(c.alive![j * 7 + 4 + p]).toBe(1);
      for (let p = 0; p < 4; p++) expect(c.alive![j * 7 + p]).toBe(a.alive![j * 4 + p]);
    }
    for (let s = 0; s < 4; s++)
      for (let p = 0; p < 3; p++) expect(c.segments[s * 7 + 4 + p]).toBe(b.segments[s * 3 + p]);
  });

  it('refuses samples of different shapes, naming the sample', () => {
    const a = coded(2, 1, false);
    const b = { ...coded(2, 2, false), nState: 1 };
    expect(() => concatSamples([a, b])).toThrow(/exercise\.samples\[1\]/);
  });
});
