import { describe, it, expect } from 'vitest';
import { polynomialBasis } from '../../../src/engine/exercise/basis.ts';

describe('polynomialBasis', () => {
  it('has C(k+d, d) monomials of total degree ≤ d in k variables', () => {
    // common practice: the number of monomials of degree ≤ d in k variables is the binomial C(k+d, d).
    expect(polynomialBasis(['a'], 2).terms.length).toBe(3);
    expect(polynomialBasis(['a', 'b'], 2).terms.length).toBe(6);
    expect(polynomialBasis(['a', 'b', 'c'], 2).terms.length).toBe(10);
    expect(polynomialBasis(['a', 'b', 'c'], 3).terms.length).toBe(20);
  });

  it('includes the cross term and names every term', () => {
    const b = polynomialBasis(['eq:ALDR', 'rate:DOM'], 2);
    expect(b.terms.map((t) => t.label)).toContain('z(eq:ALDR)·z(rate:DOM)');
    expect(b.terms[0]!.label).toBe('1');
    expect(b.description).toMatch(/degree ≤ 2/);
  });

  it('rejects a degree outside 0…3 and repeated names', () => {
    expect(() => polynomialBasis(['a'], 4)).toThrow(/exercise\.basis\.degree/);
    expect(() => polynomialBasis(['a', 'a'], 2)).toThrow(/exercise\.stateNames/);
  });
});
