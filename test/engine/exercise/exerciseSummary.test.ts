import { describe, it, expect } from 'vitest';
import {
  exerciseSummaryLines,
  hullWhiteBermudanSwaptionSource,
  priceExerciseRight,
} from '../../../src/engine/exercise/index.ts';
import { flatCurve } from '../../../src/engine/market/curve.ts';

describe('exerciseSummaryLines', () => {
  const src = hullWhiteBermudanSwaptionSource({
    curve: flatCurve('DOM', 0.04),
    a: 0.05,
    sigma: 0.01,
    type: 'payer',
    exerciseTimes: [1, 2],
    startTime: 1,
    payTimes: [2, 3],
    strike: 0.042,
    notional: 100,
  });

  it('names both bounds with their sides, the gap and its cost, the probabilities, the bias and the caveat', () => {
    const r = priceExerciseRight(src, {
      seed: 3,
      regressionPaths: 1000,
      pricingPaths: 1000,
      dual: { outerPaths: 5, innerPaths: 5 },
    });
    const text = exerciseSummaryLines(r, { currency: 'DOM' }).join('\n');
    expect(text).toMatch(/Policy estimate \(lower bound\)/);
    expect(text).toMatch(/Dual estimate \(upper bound\)/);
    expect(text).toMatch(/gap .* DOM/);
    expect(text).toMatch(/5 outer × 5 inner paths/);
    expect(text).toMatch(/1\.00y .*%, 2\.00y .*%; never/);
    expect(text).toMatch(/biased low/);
    expect(text).toMatch(/independent validation/);
  });

  it('says plainly when the dual bound was not computed', () => {
    const r = priceExerciseRight(src, { seed: 3, regressionPaths: 1000, pricingPaths: 1000 });
    expect(exerciseSummaryLines(r, { currency: 'DOM' }).join('\n')).toMatch(
      /gap between the bounds is unknown/,
    );
  });
});
