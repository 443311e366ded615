import { describe, expect, it } from 'vitest';
import {
  EngineError,
  fail,
  issue,
  requirePositive,
  throwIfErrors,
  toPlainError,
} from '../../src/engine/errors.ts';

describe('engine errors', () => {
  it('name the field, the rule and the value in the message', () => {
    const i = issue(
      'E_NEGATIVE_VOL',
      'market.vols.ALDR[2]',
      'must be > 0',
      -0.2,
      'enter the vol as a decimal',
    );
    expect(i.message).toBe('market.vols.ALDR[2] must be > 0 (got -0.2): enter the vol as a decimal');
  });
  it('show NaN as NaN, not null', () => {
    expect(() => requirePositive('model.sigma', Number.NaN)).toThrow(/model\.sigma .* \(got NaN\)/);
  });
  it('survive a structured clone as plain data with a stable code', () => {
    let caught: unknown;
    try {
      fail('E_T_NONPOSITIVE', 'option.T', 'must be > 0', 0);
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(EngineError);
    const plain = structuredClone(toPlainError(caught));
    expect(plain.code).toBe('E_T_NONPOSITIVE');
    expect(plain.issues[0]?.field).toBe('option.T');
  });
  it('let warnings through and stop on errors', () => {
    const w = issue('W_FELLER', 'heston', 'Feller condition 2κθ ≥ σ² fails', 0.5, undefined, 'warning');
    expect(throwIfErrors([w])).toHaveLength(1);
    expect(() => throwIfErrors([w, issue('E_X', 'f', 'r', 1)])).toThrow(EngineError);
  });
});
