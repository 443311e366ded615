import { describe, it, expect } from 'vitest';
import {
  batchSums,
  columnStats,
  controlVariate,
  emptySums,
  mergeSums,
} from '../../../src/engine/simulation/momentSums.ts';

describe('mergeable moment sums', () => {
  it('reproduce the textbook sample variance', () => {
    // Data 2, 4, 4, 4, 5, 5, 7, 9: mean 5, population variance 4, sample variance 32/7 (the standard worked example
    // of the standard deviation; common practice).
    const s = batchSums([Float64Array.from([2, 4, 4, 4, 5, 5, 7, 9])], 8);
    const st = columnStats(s);
    expect(st.mean(0)).toBe(5);
    expect(st.variance(0)).toBeCloseTo(32 / 7, 14);
  });

  it('merging batches equals the sums of all paths at once (Chan et al. 1979), cross terms included', () => {
    const n = 1000;
    const x = Float64Array.from({ length: n }, (_, i) => 1e6 + Math.sin(i));
    const y = Float64Array.from({ length: n }, (_, i) => 1e6 + Math.cos(3 * i) + 0.5 * Math.sin(i));
    const all = batchSums([x, y], n);
    let m = emptySums(2);
    for (let b = 0; b < n; b += 137) {
      const e = Math.min(n, b + 137);
      m = mergeSums(m, batchSums([x.slice(b, e), y.slice(b, e)], e - b));
    }
    expect(m.count).toBe(n);
    for (let i = 0; i < 4; i++) expect(m.comoment[i]!).toBeCloseTo(all.comoment[i]!, 8);
    expect(m.mean[0]!).toBeCloseTo(all.mean[0]!, 9);
    const st = columnStats(m);
    expect(st.seOfDifference(0, 1)).toBeCloseTo(st.seOfCombination([1, -1]), 14);
    expect(st.meanOfCombination([1, -1])).toBeCloseTo(st.mean(0) - st.mean(1), 9);
  });

  it('a control variate with a perfectly correlated control has zero error', () => {
    const x = Float64Array.from({ length: 50 }, (_, i) => i);
    const y = Float64Array.from(x, (v) => 3 * v + 2);
    const c = controlVariate(batchSums([y, x], 50), 0, 1, 20);
    expect(c.beta).toBeCloseTo(3, 12);
    expect(c.mean).toBeCloseTo(62, 10);
    expect(c.se).toBeLessThan(1e-6);
  });
});
