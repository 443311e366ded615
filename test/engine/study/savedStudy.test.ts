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
