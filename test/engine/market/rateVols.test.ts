import { describe, it, expect } from 'vitest';
import { rateVolIssues } from '../../../src/engine/market/rateVols.ts';
import type { RateVolSpec } from '../../../src/engine/market/types.ts';

const good: RateVolSpec = {
  instrument: 'caplet',
  type: 'normal',
  quotes: [
    { expiry: 1, tenor: 1, vol: 0.0084 },
    { expiry: 2, tenor: 1, vol: 0.0082 },
    { expiry: 2, tenor: 1, strike: -0.005, vol: 0.009 },
  ],
};

describe('rateVolIssues', () => {
  it('accepts a valid normal caplet strip (negative strikes allowed for normal vols)', () => {
    expect(rateVolIssues(good, 'rateVols.DOM')).toEqual([]);
  });

  it('requires the quote type and says to state normal or lognormal', () => {
    const { type: _omit, ...noType } = good;
    const issues = rateVolIssues(noType as RateVolSpec, 'rateVols.DOM');
    expect(issues.length).toBe(1);
    expect(issues[0]!.field).toBe('rateVols.DOM.type');
    expect(issues[0]!.code).toBe('E_RATE_VOL_TYPE');
    expect(issues[0]!.severity).toBe('error');
    expect(issues[0]!.message).toMatch(/'normal'.*'lognormal'/);
    const wrong = rateVolIssues({ ...good, type: 'bp' as 'normal' }, 'rateVols.DOM');
    expect(wrong[0]!.message).toContain("must be 'normal' or 'lognormal'");
  });

  it('names the bad cell for non-positive expiry, tenor or vol and for duplicates', () => {
    const bad: RateVolSpec = {
      instrument: 'swaption',
      type: 'lognormal',
      quotes: [
        { expiry: 0, tenor: 5, vol: 0.2 },
        { expiry: 1, tenor: -1, vol: 0.2 },
        { expiry: 1, tenor: 5, vol: -0.2 },
        { expiry: 1, tenor: 5, strike: -0.01, vol: 0.2 },
        { expiry: 2, tenor: 5, vol: 0.2 },
        { expiry: 2, tenor: 5, vol: 0.21 },
      ],
    };
    const fields = rateVolIssues(bad, 'rateVols.ASH').map((i) => i.field);
    expect(fields).toEqual([
      'rateVols.ASH.quotes[0].expiry',
      'rateVols.ASH.quotes[1].tenor',
      'rateVols.ASH.quotes[2].vol',
      'rateVols.ASH.quotes[3].strike',
      'rateVols.ASH.quotes[5]',
    ]);
  });

  it('warns when the size of a vol suggests the other quote type (common practice)', () => {
    const w1 = rateVolIssues({ ...good, quotes: [{ expiry: 1, tenor: 1, vol: 0.22 }] }, 'r');
    expect(w1[0]!.code).toBe('W_RATE_VOL_SCALE');
    expect(w1[0]!.severity).toBe('warning');
    const w2 = rateVolIssues(
      { instrument: 'caplet', type: 'lognormal', quotes: [{ expiry: 1, tenor: 1, vol: 0.008 }] },
      'r',
    );
    expect(w2[0]!.message).toContain('check that the quotes are not normal');
  });

  it('rejects an unknown instrument, a bad frequency and an empty quote list', () => {
    const issues = rateVolIssues(
      { instrument: 'cap' as 'caplet', type: 'normal', frequency: 0, quotes: [] },
      'r',
    );
    expect(issues.map((i) => i.field)).toEqual(['r.instrument', 'r.frequency', 'r.quotes']);
  });
});
