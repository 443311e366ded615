import { describe, it, expect } from 'vitest';
import {
  checkStudyHash,
  comparablePart,
  firstDifference,
  parseStudyFile,
  sealStudy,
  studyHash,
} from '../../../src/engine/study/savedStudy.ts';
import { diffStudies } from '../../../src/engine/study/diff.ts';
import { verifyStudy } from '../../../src/engine/study/verify.ts';
import { runStudy, DEFAULT_SETTINGS } from '../../../src/engine/study/study.ts';
import type { SavedStudy } from '../../../src/engine/study/types.ts';
import { readFileSync } from 'node:fs';
import { fixtureStudy } from './studyFixture.ts';

const clone = <T>(x: T): T => JSON.parse(JSON.stringify(x)) as T;

describe('saved study file', () => {
  it('round-trips through JSON and keeps its hash', () => {
    const s = fixtureStudy();
    const back = parseStudyFile(JSON.parse(JSON.stringify(s, null, 2)));
    expect(checkStudyHash(back).ok).toBe(true);
  });
  it('detects a hand edit of one number through the hash', () => {
    const s = clone(fixtureStudy());
    s.results.prices[0]!.value = 10.6;
    const h = checkStudyHash(s);
    expect(h.ok).toBe(false);
    expect(h.stored).not.toBe(h.computed);
  });
  it('hashes timings (an edit there is detected) but leaves them out of the bit-identity comparison', () => {
    const a = fixtureStudy();
    const b = clone(a);
    b.timings.total = 99;
    expect(studyHash(b)).not.toBe(a.hash);
    expect(firstDifference(comparablePart(a), comparablePart(sealStudy(b)))).toBeNull();
  });
  it('names the first differing field', () => {
    const a = fixtureStudy();
    const b = clone(a);
    b.verdicts[0]!.verdict = 'keep';
    expect(firstDifference(comparablePart(a), comparablePart(b))?.field).toBe('verdicts[0].verdict');
  });
  it('refuses a file of another format, naming the field', () => {
    expect(() => parseStudyFile({ format: 'factor-triage/deal@1' })).toThrow(/study\.format/);
    expect(() => parseStudyFile([1, 2])).toThrow(/JSON object/);
  });
  it('refuses a study with a missing section, naming it', () => {
    const s = clone(fixtureStudy()) as unknown as Record<string, unknown>;
    delete s.verdicts;
    expect(() => parseStudyFile(s)).toThrow(/study\.verdicts/);
  });
  it('refuses a zero threshold inside a study file', () => {
    const s = clone(fixtureStudy());
    (s.input.settings.threshold as { value: number }).value = 0;
    expect(() => parseStudyFile(s)).toThrow(/threshold/);
  });
});

describe('diffStudies', () => {
  it('finds nothing between a study and its copy', () => {
    const a = fixtureStudy();
    const d = diffStudies(a, clone(a));
    expect(d.identical).toBe(true);
    expect(d.sameHash).toBe(true);
  });
  it('reports a settings change, a result change and a verdict change in their sections', () => {
    const a = fixtureStudy();
    const b = clone(a);
    b.input.settings.paths = 8000;
    b.results.prices[0]!.value = 10.75;
    b.verdicts[0]!.verdict = 'drop';
    const d = diffStudies(a, sealStudy(b));
    expect(d.identical).toBe(false);
    expect(d.settings.map((c) => c.field)).toEqual(['settings.paths']);
    expect(d.results.find((c) => c.field === 'results.prices[0].value')?.change).toBeCloseTo(0.25, 12);
    expect(d.verdicts).toEqual([{ factor: 'domesticRate', a: 'undecided', b: 'drop' }]);
  });
});

describe('studies written before the budget recorded its parts', () => {
  const root = new URL('../../../', import.meta.url);
  const read = (p: string) => JSON.parse(readFileSync(new URL(p, root), 'utf8'));
  /** The same study as an older version wrote it: no budget parts, no repricing, no vol SE on the fit rows. */
  const asOlder = (s: SavedStudy): SavedStudy => {
    const o = clone(s) as SavedStudy & { results: Record<string, unknown> };
    delete o.results.budgetParts;
    delete o.results.repricing;
    if (o.results.joint) delete (o.results.joint as { budgetParts?: unknown }).budgetParts;
    for (const v of o.ladder) for (const f of v.calibration.fit) delete f.mcVolSe;
    const { hash: _h, ...rest } = o;
    return sealStudy(rest);
  };
  it('load, keep their hash and compare with a newer study', () => {
    const old = fixtureStudy();
    expect(old.results.budgetParts).toBeUndefined();
    const back = parseStudyFile(JSON.parse(JSON.stringify(old)));
    expect(checkStudyHash(back).ok).toBe(true);
    const newer = clone(old);
    newer.results.budgetParts = {
      domesticRate: { stepHalving: 0, calibration: 0.01, repricing: 0.02, exerciseGap: null },
    };
    const d = diffStudies(old, sealStudy(newer));
    expect(d.results.map((c) => c.field)).toEqual(['results.budgetParts']);
  });
  it('a newer file with a negative budget part is refused, naming the field', () => {
    const s = clone(fixtureStudy());
    s.results.budgetParts = {
      domesticRate: { stepHalving: 0, calibration: 0, repricing: -1, exerciseGap: null },
    };
    expect(() => parseStudyFile(s)).toThrow(/study\.results\.budgetParts\.domesticRate\.repricing/);
  });
  it('verify: a new study re-runs bit-identically; the older form of it is unedited and its difference explained', async () => {
    const input = {
      deal: read('samples/deals/european-call.json'),
      markets: [read('samples/market/demo-market.json')],
      settings: {
        ...DEFAULT_SETTINGS,
        paths: 8192,
        firstPaths: 4096,
        greeks: null,
        sweeps: null,
        localVol: false,
        auxiliaryFraction: 0.5,
        extraCandidates: ['domesticRate' as const],
      },
    };
    const s = await runStudy(input);
    expect(s.results.budgetParts?.domesticRate).toBeDefined();
    const same = await verifyStudy(s);
    expect(same.ok, same.message).toBe(true);
    const old = asOlder(s);
    expect(parseStudyFile(JSON.parse(JSON.stringify(old))).results.budgetParts).toBeUndefined();
    const r = await verifyStudy(old);
    expect(r.edited).toBe(false);
    expect(r.ok).toBe(false);
    expect(r.firstDifference).not.toBeNull();
    expect(r.message).toMatch(/predates the repricing part of the error budget/);
  });
});
