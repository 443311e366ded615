import { describe, expect, it } from 'vitest';
import {
  calibrationStability,
  stabilityOfFits,
} from '../../../src/engine/calibration/calibrationStability.ts';
import { calibrateLadder, snapshotLadderBasis } from '../../../src/engine/study/ladderCalibration.ts';
import { FO_HESTON, syntheticSnapshot } from './syntheticMarket.ts';

describe('parameter stability over a series of snapshots', () => {
  // Known paths: v0 moves day by day, everything else fixed; HW σ moves.
  const v0s = [0.0175, 0.019, 0.018, 0.0165];
  const sigmas = [0.01, 0.0105, 0.0102, 0.0098];
  const snaps = v0s.map((v0, i) =>
    syntheticSnapshot({
      date: `2030-01-0${i + 2}`,
      hestonDom: { ...FO_HESTON, v0 },
      hwDom: { a: 0.08, sigma: sigmas[i]! },
    }),
  );
  const r = calibrationStability(snaps, { equities: ['EQD'], currencies: ['DOM'] });

  it('recovers each date’s parameters and their day-to-day changes', () => {
    const v0 = r.paths.find((p) => p.model === 'heston:EQD' && p.parameter === 'v0')!;
    v0.values.forEach((v, i) => expect(Math.abs(v / v0s[i]! - 1), `day ${i}`).toBeLessThan(3e-3));
    expect(v0.changes).toHaveLength(3);
    v0.changes.forEach((c, i) => expect(Math.abs(c - (v0s[i + 1]! - v0s[i]!))).toBeLessThan(2e-4));
    const sig = r.paths.find((p) => p.model === 'hull-white:DOM' && p.parameter === 'sigma')!;
    sig.values.forEach((v, i) => expect(Math.abs(v - sigmas[i]!)).toBeLessThan(1e-7));
  });

  it('computes the coefficient of variation as sample std / |mean| and carries SE and condition numbers', () => {
    const sig = r.paths.find((p) => p.model === 'hull-white:DOM' && p.parameter === 'sigma')!;
    const m = sig.values.reduce((s, x) => s + x, 0) / 4;
    const sd = Math.sqrt(sig.values.reduce((s, x) => s + (x - m) ** 2, 0) / 3);
    expect(sig.coefficientOfVariation).toBeCloseTo(sd / m, 12);
    expect(sig.standardErrors.every((s) => Number.isFinite(s) && s > 0)).toBe(true);
    expect(sig.conditionNumbers.every((c) => c >= 1)).toBe(true);
    expect(r.dates).toEqual(['2030-01-02', '2030-01-03', '2030-01-04', '2030-01-05']);
  });

  it('needs at least two snapshots', () => {
    expect(() => calibrationStability(snaps.slice(0, 1), { equities: ['EQD'] })).toThrow(/at least 2 dates/);
  });

  it('follows the ladder a study of each date calibrates, parameter for parameter', () => {
    const ladder = {
      analysis: snapshotLadderBasis(snaps[0]!, { equities: ['EQD'] }),
      candidates: ['stochVol' as const, 'domesticRate' as const],
      required: [],
      mode: 'fair' as const,
      scheme: 'qe' as const,
    };
    const viaLadder = calibrationStability(snaps, { ladder });
    snaps.forEach((s, i) => {
      const l = calibrateLadder({ ...ladder, snapshot: s });
      const path = (m: string, k: string) =>
        viaLadder.paths.find((p) => p.model === m && p.parameter === k)!.values[i];
      for (const k of ['v0', 'kappa', 'theta', 'sigma', 'rho'] as const)
        expect(path('heston:EQD', k), `${s.date} ${k}`).toBe(l.heston.EQD![k]);
      expect(path('hull-white:DOM', 'a')).toBe(l.hullWhite.DOM!.params.a);
      expect(path('hull-white:DOM', 'sigma')).toBe(l.hullWhite.DOM!.params.sigma);
    });
  });

  it('orders the dates and keeps a parameter missing on a date out of that date', () => {
    const fit = (v: number) => ({
      model: 'm',
      parameters: [{ name: 'x', value: v, standardError: 0.1 }],
      conditionNumber: 2,
      fitRmse: 0.01,
    });
    const r = stabilityOfFits([
      { date: '2030-01-03', fits: [fit(2)] },
      { date: '2030-01-02', fits: [fit(1)] },
      { date: '2030-01-04', fits: [] },
    ]);
    expect(r.dates).toEqual(['2030-01-02', '2030-01-03', '2030-01-04']);
    expect(r.paths[0]!.dates).toEqual(['2030-01-02', '2030-01-03']);
    expect(r.paths[0]!.changes).toEqual([1]);
    // Sample sd of {1, 2} = 1/√2, mean 1.5.
    expect(r.paths[0]!.coefficientOfVariation).toBeCloseTo(Math.SQRT1_2 / 1.5, 14);
  });

  it('names the date and the field when a snapshot of the series lacks an equity', () => {
    const broken = { ...snaps[1]!, equities: { EQF: snaps[1]!.equities.EQF! } };
    expect(() => calibrationStability([snaps[0]!, broken], { equities: ['EQD'] })).toThrow(
      /2030-01-03: equities\.EQD must be in every snapshot/,
    );
  });
});
