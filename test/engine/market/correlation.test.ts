import { describe, it, expect } from 'vitest';
import {
  correlationIssues,
  correlationOf,
  subMatrix,
  validateCorrelation,
  type CorrelationSpec,
} from '../../../src/engine/market/correlation.ts';
import { EngineError } from '../../../src/engine/errors.ts';
import { isPsd } from '../../../src/engine/math/linalg.ts';

const spec: CorrelationSpec = {
  names: ['eq:ALDR', 'var:ALDR', 'rate:DOM'],
  matrix: [
    [1, -0.7, 0.2],
    [-0.7, 1, 0],
    [0.2, 0, 1],
  ],
};

function errorOf(f: () => unknown): EngineError {
  try {
    f();
  } catch (e) {
    if (e instanceof EngineError) return e;
    throw e;
  }
  throw new Error('expected an EngineError');
}

describe('validateCorrelation', () => {
  it('accepts a valid matrix with no warnings', () => {
    expect(validateCorrelation(spec)).toEqual([]);
  });

  it('rejects a non-PSD matrix with E_NOT_PSD, the most negative eigenvalue and the nearest matrix offered', () => {
    // ρ12 = ρ23 = 0.9, ρ13 = −0.9: eigenvalues 1.9, 1.9, −0.8 (common practice: a classic inconsistent triple).
    const bad: CorrelationSpec = {
      names: ['eq:ALDR', 'eq:BRIX', 'eq:KESO'],
      matrix: [
        [1, 0.9, -0.9],
        [0.9, 1, 0.9],
        [-0.9, 0.9, 1],
      ],
    };
    const e = errorOf(() => validateCorrelation(bad));
    expect(e.code).toBe('E_NOT_PSD');
    const i = e.issues.find((x) => x.code === 'E_NOT_PSD')!;
    expect(i.field).toBe('correlation.matrix');
    const v = i.value as { minEigenvalue: number; nearest: number[][] };
    expect(v.minEigenvalue).toBeCloseTo(-0.8, 12);
    expect(isPsd(v.nearest)).toBe(true);
    expect(() => validateCorrelation({ names: bad.names, matrix: v.nearest })).not.toThrow();
  });

  it('names the cell that breaks symmetry, the unit diagonal or the range', () => {
    const asym = structuredClone(spec);
    asym.matrix[0]![2] = 0.3;
    expect(errorOf(() => validateCorrelation(asym)).issues[0]!.field).toBe('correlation.matrix[0][2]');
    const diag = structuredClone(spec);
    diag.matrix[1]![1] = 0.99;
    const d = errorOf(() => validateCorrelation(diag, 'market.correlation')).issues[0]!;
    expect(d.field).toBe('market.correlation.matrix[1][1]');
    expect(d.rule).toContain('must be 1');
    const range = structuredClone(spec);
    range.matrix[0]![1] = -1.2;
    range.matrix[1]![0] = -1.2;
    expect(errorOf(() => validateCorrelation(range)).issues.map((x) => x.field)).toEqual([
      'correlation.matrix[0][1]',
      'correlation.matrix[1][0]',
    ]);
  });

  it('rejects shape errors and duplicate names', () => {
    expect(correlationIssues({ names: ['a', 'b'], matrix: [[1, 0]] })[0]!.field).toBe('correlation.matrix');
    expect(
      correlationIssues({
        names: ['a', 'a'],
        matrix: [
          [1, 0],
          [0, 1],
        ],
      })[0]!.code,
    ).toBe('E_CORRELATION_DUPLICATE');
  });

  it('warns (does not fail) on perfectly correlated drivers', () => {
    const w = validateCorrelation({
      names: ['eq:ALDR', 'eq:BRIX'],
      matrix: [
        [1, 1],
        [1, 1],
      ],
    });
    expect(w.length).toBe(1);
    expect(w[0]!.code).toBe('W_CORRELATION_PERFECT');
    expect(w[0]!.severity).toBe('warning');
  });
});

describe('subMatrix', () => {
  it('extracts drivers in the requested order', () => {
    const s = subMatrix(spec, ['rate:DOM', 'eq:ALDR']);
    expect(s).toEqual({
      names: ['rate:DOM', 'eq:ALDR'],
      matrix: [
        [1, 0.2],
        [0.2, 1],
      ],
    });
    expect(correlationOf(spec, 'var:ALDR', 'eq:ALDR')).toBe(-0.7);
  });

  it('throws naming a missing driver', () => {
    expect(() => subMatrix(spec, ['eq:ALDR', 'fx:ASH/DOM'])).toThrowError(/must include "fx:ASH\/DOM"/);
  });
});
