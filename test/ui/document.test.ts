import { describe, it, expect } from 'vitest';
import {
  DEFAULT_SETTINGS,
  documentReducer,
  parseDraft,
  serializeDraft,
  suggestedName,
  MAX_DRAFT_STUDY,
  type StudyDocument,
} from '../../src/ui/state/document.ts';
import type { SavedStudy } from '../../src/engine/study/types.ts';

const deal = {
  format: 'factor-triage/deal@1' as const,
  name: 'Note on ALDR / 2029',
  notional: 1e6,
  currency: 'DOM',
  underlyings: {},
  schedules: {},
  events: [],
};
const blank: StudyDocument = {
  deal,
  markets: [],
  settings: DEFAULT_SETTINGS,
  raw: {},
  study: null,
  fileName: null,
  handle: null,
  dirty: false,
  stale: false,
};
const fakeStudy = {
  hash: 'a'.repeat(64),
  input: { deal, markets: [], settings: DEFAULT_SETTINGS },
} as unknown as SavedStudy;

describe('working document', () => {
  it('an edit marks the document unsaved, and stale once a study exists', () => {
    const a = documentReducer(blank, { type: 'setSettings', settings: { ...DEFAULT_SETTINGS, paths: 1024 } });
    expect(a).toMatchObject({ dirty: true, stale: false });
    const b = documentReducer(
      { ...blank, study: fakeStudy },
      { type: 'setDeal', deal: { ...deal, notional: 2e6 } },
    );
    expect(b).toMatchObject({ dirty: true, stale: true });
  });
  it('typed texts that are not valid yet are kept by field and removed only on request', () => {
    let d = documentReducer(blank, { type: 'setRaw', path: 'settings.paths', text: '12k' });
    expect(d.raw).toEqual({ 'settings.paths': '12k' });
    d = documentReducer(d, { type: 'setRaw', path: 'settings.paths', text: null });
    expect(d.raw).toEqual({});
  });
  it('opening a study takes its inputs and clears the unsaved mark', () => {
    const d = documentReducer(
      { ...blank, dirty: true },
      { type: 'studyOpened', study: fakeStudy, fileName: 'q3.study.json', handle: null },
    );
    expect(d).toMatchObject({ dirty: false, stale: false, fileName: 'q3.study.json', study: fakeStudy });
  });
  it('a run keeps the document unsaved until it is saved', () => {
    const d = documentReducer(blank, { type: 'studyRan', study: fakeStudy });
    expect(d.dirty).toBe(true);
    expect(documentReducer(d, { type: 'saved', fileName: 'x.study.json', handle: null }).dirty).toBe(false);
  });
});

describe('drafts', () => {
  it('round-trip everything typed, including invalid texts', () => {
    const d = { ...blank, raw: { 'deal.notional': 'ten' }, dirty: true };
    const back = parseDraft(serializeDraft(d, 5));
    expect(back?.doc).toEqual(d);
    expect(back?.savedAt).toBe(5);
  });
  it('leave out a study too large for browser storage but keep the inputs', () => {
    const big = { ...fakeStudy, pad: 'x'.repeat(MAX_DRAFT_STUDY + 1) } as unknown as SavedStudy;
    const back = parseDraft(serializeDraft({ ...blank, study: big }, 1));
    expect(back?.doc.study).toBeNull();
    expect(back?.doc.deal).toEqual(deal);
  });
  it('a damaged or foreign draft is ignored, not fatal', () => {
    expect(parseDraft(null)).toBeNull();
    expect(parseDraft('{oops')).toBeNull();
    expect(parseDraft(JSON.stringify({ format: 'other', doc: {} }))).toBeNull();
    expect(parseDraft(JSON.stringify({ format: 'factor-triage/draft@1', doc: { deal: 1 } }))).toBeNull();
  });
  it('suggest a plain file name from the deal name', () => {
    expect(suggestedName(blank)).toBe('Note on ALDR 2029');
    expect(suggestedName({ ...blank, fileName: 'q3.study.json' })).toBe('q3');
  });
});
