/**
 * The working document: the inputs being edited (deal, market snapshots, study settings), the texts typed
 * that are not valid yet, and the last study (run here or opened). Plain data, changed only through
 * {@link documentReducer}, autosaved as a draft.
 */
import type { DealInput } from '../../engine/deal/types.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';
import type { SavedStudy, StudySettings } from '../../engine/study/types.ts';
import { DEFAULT_SETTINGS } from '../../engine/study/defaults.ts';

/** A deal being edited: the file's shape, but any part may be incomplete while the user types. */
export type DealDraft = DealInput;

export interface StudyDocument {
  deal: DealDraft;
  markets: MarketSnapshot[];
  settings: StudySettings;
  /** Texts typed into number fields that are not valid yet, by field path (kept, never dropped). */
  raw: Record<string, string>;
  /** The last study: run in this session or opened from a file. */
  study: SavedStudy | null;
  /** File name the study was opened from or saved to; null for a new document. */
  fileName: string | null;
  /** Desktop: path to save back to. */
  handle: string | null;
  /** The inputs changed since the study was saved or opened. */
  dirty: boolean;
  /** The inputs changed since the study in `study` was run (its results describe older inputs). */
  stale: boolean;
}

/** Study settings for a new document: the engine's defaults; every one is editable on the Triage screen. */
export { DEFAULT_SETTINGS };

export type DocumentAction =
  | { type: 'setDeal'; deal: DealDraft }
  | { type: 'setMarket'; index: number; market: MarketSnapshot }
  | { type: 'setMarkets'; markets: MarketSnapshot[] }
  | { type: 'setSettings'; settings: StudySettings }
  | { type: 'setRaw'; path: string; text: string | null }
  | { type: 'studyRan'; study: SavedStudy }
  | { type: 'studyOpened'; study: SavedStudy; fileName: string; handle: string | null }
  | { type: 'saved'; fileName: string; handle: string | null }
  | { type: 'restore'; doc: StudyDocument };

function edited(doc: StudyDocument, patch: Partial<StudyDocument>): StudyDocument {
  return { ...doc, ...patch, dirty: true, stale: doc.study !== null };
}

/** A document holding a study's own inputs. */
export function documentFromStudy(
  study: SavedStudy,
  fileName: string | null,
  handle: string | null,
): StudyDocument {
  return {
    deal: study.input.deal,
    markets: study.input.markets,
    settings: study.input.settings,
    raw: {},
    study,
    fileName,
    handle,
    dirty: false,
    stale: false,
  };
}

export function documentReducer(doc: StudyDocument, a: DocumentAction): StudyDocument {
  switch (a.type) {
    case 'setDeal':
      return edited(doc, { deal: a.deal });
    case 'setMarket':
      return edited(doc, { markets: doc.markets.map((m, i) => (i === a.index ? a.market : m)) });
    case 'setMarkets':
      return edited(doc, { markets: a.markets });
    case 'setSettings':
      return edited(doc, { settings: a.settings });
    case 'setRaw': {
      const raw = { ...doc.raw };
      if (a.text === null) delete raw[a.path];
      else raw[a.path] = a.text;
      return { ...doc, raw };
    }
    case 'studyRan':
      return { ...doc, study: a.study, dirty: true, stale: false };
    case 'studyOpened':
      return documentFromStudy(a.study, a.fileName, a.handle);
    case 'saved':
      return { ...doc, fileName: a.fileName, handle: a.handle, dirty: false };
    case 'restore':
      return a.doc;
  }
}

/** What is autosaved: the inputs and typed texts always; the study only when it fits comfortably. */
export interface DraftFile {
  format: 'factor-triage/draft@1';
  savedAt: number;
  doc: Omit<StudyDocument, 'study'> & { study: SavedStudy | null };
}

/** Largest study kept inside a draft (characters); beyond it the draft keeps the inputs only. */
export const MAX_DRAFT_STUDY = 3_000_000;

export function serializeDraft(doc: StudyDocument, now: number): string {
  const studyText = doc.study ? JSON.stringify(doc.study) : '';
  const keep = studyText.length <= MAX_DRAFT_STUDY;
  const file: DraftFile = {
    format: 'factor-triage/draft@1',
    savedAt: now,
    doc: { ...doc, study: keep ? doc.study : null },
  };
  return JSON.stringify(file);
}

/** Reads a draft back; null when there is none or it is damaged (a damaged draft is ignored, not fatal). */
export function parseDraft(text: string | null): { doc: StudyDocument; savedAt: number } | null {
  if (!text) return null;
  try {
    const f = JSON.parse(text) as DraftFile;
    if (f.format !== 'factor-triage/draft@1' || !f.doc || typeof f.doc !== 'object') return null;
    const d = f.doc;
    if (!d.deal || !Array.isArray(d.markets) || !d.settings || typeof d.raw !== 'object') return null;
    return { doc: { ...d, study: d.study ?? null }, savedAt: f.savedAt };
  } catch {
    return null;
  }
}

/** A file name for saving, from the deal name. */
export function suggestedName(doc: StudyDocument): string {
  if (doc.fileName) return doc.fileName.replace(/\.study\.json$/i, '').replace(/\.json$/i, '');
  const n = (doc.deal?.name ?? 'study')
    .replace(/[^A-Za-z0-9 _.-]+/g, ' ')
    .replace(/\s+/g, ' ')
    .trim();
  return n.length ? n.slice(0, 80) : 'study';
}
