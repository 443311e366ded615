import { describe, it, expect } from 'vitest';
import { bracketIndex } from '../../../src/engine/math/search.ts';

describe('bracketIndex', () => {
  const xs = [0.5, 1, 2, 5, 10];
  it('returns the interval whose left end is the last abscissa at or below x (binary search; common practice)', () => {
    // Checked against a linear scan over points inside, on and between the abscissae.
    for (let x = 0.5; x < 10; x += 0.0625) {
      let scan = 0;
      for (let i = 0; i < xs.length - 1; i++) if (xs[i]! <= x) scan = i;
      expect(bracketIndex(xs, x), `x = ${x}`).toBe(scan);
    }
    expect(bracketIndex(xs, 2)).toBe(2);
  });

  it('clamps to the first and last interval outside the range and handles one or two abscissae', () => {
    expect(bracketIndex(xs, -3)).toBe(0);
    expect(bracketIndex(xs, 10)).toBe(3);
    expect(bracketIndex(xs, 1e9)).toBe(3);
    expect(bracketIndex([1, 2], 5)).toBe(0);
    expect(bracketIndex([1], 5)).toBe(0);
  });
});
