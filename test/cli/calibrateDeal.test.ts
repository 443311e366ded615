import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';
import {
  DEFAULT_SETTINGS,
  runStudy,
  type SavedStudy,
  type StudySettings,
} from '../../src/engine/study/index.ts';

// Sample deals and the demo market are inputs only: the check is that two routes to one ladder agree, bit for bit.
const root = path.resolve(__dirname, '../..');
const MARKET = path.join(root, 'samples/market/demo-market.json');
const read = (p: string) => JSON.parse(readFileSync(p, 'utf8'));

/** Few paths, no hedge ratios, sweeps or local vol: the study's calibration is what is compared. */
const FAST: Partial<StudySettings> = {
  paths: 4096,
  firstPaths: 4096,
  batchSize: 4096,
  greeks: null,
  sweeps: null,
  localVol: false,
};

interface CalibrationJson {
  format: string;
  candidates: string[];
  required: string[];
  ladder: {
    variants: SavedStudy['ladder'];
    hullWhite: Record<string, { params: unknown }>;
    heston: Record<string, unknown>;
  };
}

async function calibrateJson(args: string[]): Promise<CalibrationJson> {
  const io = captureIo();
  const code = await main(['calibrate', MARKET, ...args, '--json'], io);
  expect(code, io.errLines.join('\n')).toBe(0);
  return JSON.parse(io.outLines.join('\n')) as CalibrationJson;
}

function expectSameLadder(cal: CalibrationJson, study: SavedStudy): void {
  const ladder = study.ladder.filter((v) => v.role !== 'localVol');
  expect(cal.format).toBe('factor-triage/calibration@2');
  expect(cal.candidates).toEqual(study.candidates);
  expect(cal.required).toEqual(study.required);
  expect(cal.ladder.variants.map((v) => v.id)).toEqual(ladder.map((v) => v.id));
  cal.ladder.variants.forEach((v, i) => {
    const s = ladder[i]!;
    // toEqual compares numbers with Object.is: every model parameter, curve and correlation bit for bit.
    expect(v.spec, `variant ${v.id}: spec`).toEqual(s.spec);
    expect(v.mask).toBe(s.mask);
    expect(v.factors).toEqual(s.factors);
    // The study appends its Monte Carlo reprices (mcError set) to the calibration rows; the rest are the fit.
    expect(v.calibration.fit, `variant ${v.id}: fit rows`).toEqual(
      s.calibration.fit.filter((r) => r.mcError === null),
    );
    expect(v.calibration.rmseVol).toBe(s.calibration.rmseVol);
    expect(v.calibration.maxAbsVolError).toBe(s.calibration.maxAbsVolError);
    expect(v.calibration.characteristicFunction).toBe(s.calibration.characteristicFunction);
    expect(v.calibration.feller).toEqual(s.calibration.feller);
  });
}

describe('calibrate --deal prints the ladder the study of that deal simulates', () => {
  const dir = mkdtempSync(path.join(tmpdir(), 'ft-cal-deal-'));
  const settingsFile = path.join(dir, 'settings.json');
  writeFileSync(settingsFile, JSON.stringify(FAST));

  it('quanto worst-of with both rate factors added: same variant ids, parameters and fit rows', async () => {
    const dealFile = path.join(root, 'samples/deals/worst-of-quanto.json');
    const cal = await calibrateJson([
      '--deal',
      dealFile,
      '--settings',
      settingsFile,
      '--also',
      'domesticRate',
      '--also',
      'foreignRate',
    ]);
    const study = await runStudy({
      deal: read(dealFile),
      markets: [read(MARKET)],
      settings: { ...DEFAULT_SETTINGS, ...FAST, extraCandidates: ['domesticRate', 'foreignRate'] },
    });
    expect(study.ladder.length).toBe(8);
    expectSameLadder(cal, study);
    // Hull–White per currency and the deterministic-rate Heston fits behind the variants.
    for (const v of study.ladder)
      for (const [c, r] of Object.entries(v.spec.rates))
        if (r.hw) expect(cal.ladder.hullWhite[c]!.params, `${v.id} ${c}`).toEqual(r.hw);
  }, 30_000);

  it('equity–rate best of with a required rate and the Euler scheme: same ladder', async () => {
    const dealFile = path.join(root, 'samples/deals/equity-rate-best-of.json');
    const cal = await calibrateJson(['--deal', dealFile, '--settings', settingsFile, '--euler']);
    const study = await runStudy({
      deal: read(dealFile),
      markets: [read(MARKET)],
      settings: { ...DEFAULT_SETTINGS, ...FAST, scheme: 'euler' },
    });
    expect(study.required).toEqual(['domesticRate']);
    expect(cal.ladder.variants.every((v) => v.spec.hestonScheme === 'euler')).toBe(true);
    expectSameLadder(cal, study);
  }, 30_000);

  it('naive calibration of a floating note: same labelled variants as the study', async () => {
    const dealFile = path.join(root, 'samples/deals/long-dated-floating-note.json');
    const cal = await calibrateJson(['--deal', dealFile, '--settings', settingsFile, '--naive']);
    const study = await runStudy({
      deal: read(dealFile),
      markets: [read(MARKET)],
      settings: { ...DEFAULT_SETTINGS, ...FAST, calibration: 'naive' },
    });
    expect(cal.ladder.variants.every((v) => v.role === 'naive' && v.id.endsWith('~naive'))).toBe(true);
    expectSameLadder(cal, study);
  }, 30_000);

  it('over a series of dates: the stability paths carry the parameters the study fits on each date', async () => {
    const dealFile = path.join(root, 'samples/deals/long-dated-floating-note.json');
    const series = ['2026-11-23', '2026-11-24'].map((d) =>
      path.join(root, `samples/market/series/${d}.json`),
    );
    const io = captureIo();
    const code = await main(
      ['calibrate', ...series, '--deal', dealFile, '--settings', settingsFile, '--json'],
      io,
    );
    expect(code, io.errLines.join('\n')).toBe(0);
    const cal = JSON.parse(io.outLines.join('\n')) as {
      stability: { dates: string[]; paths: { model: string; parameter: string; values: number[] }[] };
    };
    const study = await runStudy({
      deal: read(dealFile),
      markets: series.map(read),
      settings: { ...DEFAULT_SETTINGS, ...FAST },
    });
    const st = study.results.stability;
    expect(cal.stability.dates).toEqual(st.map((x) => x.date));
    const value = (model: string, parameter: string, i: number) =>
      cal.stability.paths.find((p) => p.model === model && p.parameter === parameter)!.values[i];
    st.forEach((day, i) => {
      for (const [k, v] of Object.entries(day.params['heston ALDR']!))
        expect(value('heston:ALDR', k, i), `${day.date} heston ${k}`).toBe(v);
      expect(value('hull-white:DOM', 'a', i), `${day.date} a`).toBe(day.params['hw DOM']!.a);
      expect(value('hull-white:DOM', 'sigma', i), `${day.date} sigma`).toBe(day.params['hw DOM']!.sigma);
    });
  }, 30_000);
});
