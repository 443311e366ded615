import { describe, it, expect } from 'vitest';
import { localDrafts, KIND_EXTENSION } from '../../src/ui/platform/platform.ts';

/** A Storage stand-in; `full` makes every write fail as a full or disabled localStorage does. */
function memoryStorage(full = false): Storage {
  const m = new Map<string, string>();
  return {
    get length() {
      return m.size;
    },
    clear: () => m.clear(),
    getItem: (k) => m.get(k) ?? null,
    key: (i) => [...m.keys()][i] ?? null,
    removeItem: (k) => void m.delete(k),
    setItem: (k, v) => {
      if (full) throw new DOMException('quota exceeded', 'QuotaExceededError');
      m.set(k, v);
    },
  };
}

describe('draft storage', () => {
  it('keeps drafts under a prefixed key and gives them back', () => {
    const s = memoryStorage();
    const d = localDrafts(s);
    d.save('draft', 'text');
    expect(s.getItem('factor-triage:draft')).toBe('text');
    expect(d.load('draft')).toBe('text');
    d.remove('draft');
    expect(d.load('draft')).toBeNull();
  });
  it('a full or missing storage never throws into the app', () => {
    expect(() => localDrafts(memoryStorage(true)).save('draft', 'x')).not.toThrow();
    const none = localDrafts(null);
    expect(() => none.save('draft', 'x')).not.toThrow();
    expect(none.load('draft')).toBeNull();
  });
  it('saves each kind of file with its own extension', () => {
    expect(KIND_EXTENSION).toEqual({
      study: '.study.json',
      deal: '.deal.json',
      market: '.json',
      csv: '.csv',
    });
  });
});
