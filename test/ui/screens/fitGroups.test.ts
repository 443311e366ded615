import { describe, it, expect } from 'vitest';
import { groupFit, parseFitLabel, rmseOf } from '../../../src/ui/screens/fitGroups.ts';
import type { FitRow } from '../../../src/engine/study/types.ts';
import type { MarketSnapshot } from '../../../src/engine/market/types.ts';

// Labels in the forms the study writes (study/ladderCalibration.ts, study/study.ts); values are arbitrary.
const row = (
  instrument: string,
  marketVol: number,
  modelVol: number,
  extra: Partial<FitRow> = {},
): FitRow => ({
  instrument,
  marketVol,
  modelVol,
  priceError: 0,
  mcError: null,
  ...extra,
});

const market = {
  equities: {
    BRIX: { currency: 'ASH', spot: 200, divYield: 0, vols: { expiries: [], moneyness: [], vols: [] } },
  },
  rateVols: { ASH: { instrument: 'caplet', type: 'normal', quotes: [] } },
} as unknown as MarketSnapshot;

describe('instrument labels', () => {
  it('read equity expiry and strike, with or without the option type', () => {
    expect(parseFitLabel('BRIX K=180.5 T=0.5')).toMatchObject({
      asset: 'equity',
      name: 'BRIX',
      expiry: 0.5,
      strike: 180.5,
      monteCarlo: false,
    });
    expect(parseFitLabel('BRIX call K=200 T=2')).toMatchObject({ asset: 'equity', expiry: 2, strike: 200 });
    expect(parseFitLabel('BRIX put K=190.25 T=3 (Monte Carlo reprice)')).toMatchObject({
      expiry: 3,
      strike: 190.25,
      monteCarlo: true,
    });
    expect(parseFitLabel('BRIX  T=1')).toMatchObject({ asset: 'equity', expiry: 1, strike: null });
  });
  it('read rate instrument, expiry, tenor and a percent strike', () => {
    expect(parseFitLabel('ASH caplet 2y×1y')).toMatchObject({
      asset: 'rate',
      name: 'ASH',
      rateInstrument: 'caplet',
      expiry: 2,
      tenor: 1,
      strike: null,
    });
    const mc = parseFitLabel('ASH caplet 2y×1y K=3.25000% (Monte Carlo reprice)');
    expect(mc).toMatchObject({ asset: 'rate', expiry: 2, tenor: 1, monteCarlo: true });
    expect(mc.strike).toBeCloseTo(0.0325, 12);
    expect(parseFitLabel('ASH swaption 5y×10y')).toMatchObject({
      rateInstrument: 'swaption',
      expiry: 5,
      tenor: 10,
    });
  });
  it('leave anything else as other', () => {
    expect(parseFitLabel('term structure point').asset).toBe('other');
  });
});

describe('grouping a variant fit', () => {
  const fit: FitRow[] = [
    row('BRIX K=220 T=1', 0.18, 0.181),
    row('BRIX K=180 T=1', 0.24, 0.238),
    row('BRIX K=200 T=0.5', 0.2, 0.2),
    row('ASH caplet 2y×1y', 0.0082, 0.0081),
    row('ASH caplet 1y×1y', 0.0084, 0.0085),
    row('BRIX call K=220 T=1 (Monte Carlo reprice)', 0.18, 0.181, {
      mcError: { value: 0.1, se: 0.2 },
      calibrated: true,
    }),
    row('BRIX put K=150 T=1 (Monte Carlo reprice)', 0.3, 0.26, {
      mcError: { value: -1, se: 0.2 },
      calibrated: false,
    }),
    row('ASH caplet 1y×1y K=3.00000% (Monte Carlo reprice)', 0.0084, 0.0084, {
      mcError: { value: 1e-5, se: 2e-5 },
    }),
  ];
  const g = groupFit(fit, market);
  const lines = [
    ...g.equities.flatMap((e) => e.expiries.flatMap((x) => x.lines)),
    ...g.rates.flatMap((r) => r.lines),
    ...g.other,
  ];

  it('puts each equity row under its expiry, sorted by expiry then strike, with moneyness K/S0', () => {
    expect(g.equities.map((e) => e.name)).toEqual(['BRIX']);
    const e = g.equities[0]!;
    expect(e.spot).toBe(200);
    expect(e.expiries.map((x) => x.expiry)).toEqual([0.5, 1]);
    expect(e.expiries[1]!.lines.map((l) => l.parsed.strike)).toEqual([150, 180, 220]);
    expect(e.expiries[1]!.lines.map((l) => l.moneyness)).toEqual([0.75, 0.9, 1.1]);
  });
  it('joins a reprice to the calibration row of the same instrument, and keeps an unmatched one as a check', () => {
    const k220 = lines.find((l) => l.parsed.strike === 220)!;
    expect(k220.label).toBe('BRIX K=220 T=1');
    expect(k220.mc).toEqual({ value: 0.1, se: 0.2 });
    expect(k220.note).toBe('repriced');
    const k150 = lines.find((l) => l.parsed.strike === 150)!;
    expect(k150.note).toBe('checkOnly');
    expect(k150.calibrated).toBe(false);
    const cap1 = g.rates[0]!.lines.find((l) => l.parsed.expiry === 1)!;
    expect(cap1.mc?.value).toBe(1e-5);
  });
  it('says why a calibration row carries no reprice', () => {
    expect(lines.find((l) => l.parsed.strike === 180)!.note).toBe('notSelected');
    expect(g.rates[0]!.lines.find((l) => l.parsed.expiry === 2)!.note).toBe('notSelected');
    const none = groupFit([row('BRIX K=200 T=1', 0.2, 0.2)], market);
    expect(none.equities[0]!.expiries[0]!.lines[0]!.note).toBe('noneInStudy');
    const sw = groupFit([row('ASH swaption 5y×5y', 0.008, 0.008)], market);
    expect(sw.rates[0]!.lines[0]!.note).toBe('swaption');
  });
  it('keeps every input row exactly once (joined reprices count once with their host)', () => {
    const joined = 2; // the BRIX K=220 T=1 and ASH 1y×1y reprices
    expect(lines.length).toBe(fit.length - joined);
    expect(new Set(lines.map((l) => l.label)).size).toBe(lines.length);
  });
  it('takes the rate quote type from the pricing snapshot, and orders rates by expiry', () => {
    expect(g.rates.map((r) => [r.currency, r.quoteType])).toEqual([['ASH', 'normal']]);
    expect(g.rates[0]!.lines.map((l) => l.parsed.expiry)).toEqual([1, 2]);
    expect(groupFit(fit, undefined).rates[0]!.quoteType).toBeNull();
    expect(groupFit(fit, undefined).equities[0]!.spot).toBeNull();
  });
  it('gives a variant without rate quotes no rate group', () => {
    const eqOnly = groupFit(
      fit.filter((f) => !f.instrument.startsWith('ASH')),
      market,
    );
    expect(eqOnly.rates).toEqual([]);
  });
});

describe('group RMSE', () => {
  it('is the root mean square of fitted − quoted over the calibration rows (common practice), reprices excluded', () => {
    const g = groupFit(
      [
        row('BRIX K=180 T=1', 0.2, 0.203),
        row('BRIX K=200 T=1', 0.2, 0.196),
        row('BRIX put K=150 T=1 (Monte Carlo reprice)', 0.3, 0.2, {
          mcError: { value: 1, se: 1 },
          calibrated: false,
        }),
      ],
      market,
    );
    const expected = Math.sqrt((0.003 ** 2 + 0.004 ** 2) / 2);
    const got = rmseOf(g.equities[0]!.expiries[0]!.lines);
    expect(got, `expected ${expected}, got ${got}`).toBeCloseTo(expected, 14);
    expect(Number.isNaN(rmseOf([]))).toBe(true);
  });
});
