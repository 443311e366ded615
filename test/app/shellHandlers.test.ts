import { describe, it, expect, beforeEach, afterEach } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { createShellHandlers, type ShellServices } from '../../app/lib/shellHandlers.cjs';
import { CHANNELS } from '../../app/lib/ipc.cjs';
import type { RecentFile } from '../../app/lib/recentFiles.cjs';

let dir = '';
let recent: RecentFile[] = [];
let nextOpen: string | null = null;
let nextSave: string | null = null;
let revealed: string[] = [];
let docState: { dirty: boolean; title: string } | null = null;

function services(over: Partial<ShellServices> = {}): ShellServices {
  return {
    fs,
    now: () => 1_700_000_000_000,
    loadRecent: () => recent,
    storeRecent: (l) => {
      recent = l;
    },
    revealInFolder: (p) => revealed.push(p),
    printToPdf: async (html) => Buffer.from(`%PDF-1.7 ${html.length}`),
    setDocumentState: (s) => {
      docState = s;
    },
    showOpenDialog: async () => nextOpen,
    showSaveDialog: async () => nextSave,
    ...over,
  };
}

beforeEach(() => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ft-shell-'));
  recent = [];
  nextOpen = null;
  nextSave = null;
  revealed = [];
  docState = null;
});
afterEach(() => fs.rmSync(dir, { recursive: true, force: true }));

describe('shell handlers', () => {
  it('open: returns the text of the chosen file, grants its path and adds it to the recent list', async () => {
    const p = path.join(dir, 'q3.study.json');
    fs.writeFileSync(p, '{"format":"x"}');
    nextOpen = p;
    const h = createShellHandlers(services());
    const r = await h.handle(CHANNELS.openFile, { kind: 'study' });
    expect(r).toEqual({ ok: true, value: { path: p, name: 'q3.study.json', text: '{"format":"x"}' } });
    expect(h.granted.has(p)).toBe(true);
    expect(recent[0]!.path).toBe(p);
  });
  it('open: a cancelled dialog is a null result, not an error', async () => {
    const h = createShellHandlers(services());
    expect(await h.handle(CHANNELS.openFile, { kind: 'deal' })).toEqual({ ok: true, value: null });
  });
  it('save: refuses a path that was never granted and leaves the disk untouched', async () => {
    const p = path.join(dir, 'other.study.json');
    const h = createShellHandlers(services());
    const r = await h.handle(CHANNELS.save, { path: p, text: 'x' });
    expect(r.ok).toBe(false);
    expect(r.error.code).toBe('E_IPC_NOT_GRANTED');
    expect(fs.existsSync(p)).toBe(false);
  });
  it('save-as then save: writes atomically to the chosen path and may write there again', async () => {
    const p = path.join(dir, 'new.study.json');
    nextSave = p;
    const h = createShellHandlers(services());
    const r1 = await h.handle(CHANNELS.saveAs, { kind: 'study', suggestedName: 'new', text: 'one' });
    expect(r1).toEqual({ ok: true, value: { path: p, name: 'new.study.json' } });
    const r2 = await h.handle(CHANNELS.save, { path: p, text: 'two' });
    expect(r2.ok).toBe(true);
    expect(fs.readFileSync(p, 'utf8')).toBe('two');
  });
  it('save-as proposes the kind’s extension in the dialog', async () => {
    let proposed = '';
    const h = createShellHandlers(
      services({
        showSaveDialog: async (o) => {
          proposed = o.defaultName;
          return null;
        },
      }),
    );
    await h.handle(CHANNELS.saveAs, { kind: 'study', suggestedName: 'Q3 note', text: '{}' });
    expect(proposed).toBe('Q3 note.study.json');
  });
  it('a write error comes back as a plain error naming the path', async () => {
    const p = path.join(dir, 'missing-folder', 'x.study.json');
    nextSave = p;
    const h = createShellHandlers(services());
    const r = await h.handle(CHANNELS.saveAs, { kind: 'study', suggestedName: 'x', text: '{}' });
    expect(r.ok).toBe(false);
    expect(r.error.code).toBe('E_FILE_WRITE');
    expect(r.error.message).toContain(p);
  });
  it('exports the report to PDF through the printer and writes the bytes', async () => {
    const p = path.join(dir, 'report.pdf');
    nextSave = p;
    const h = createShellHandlers(services());
    const html = '<!doctype html><html><body>r</body></html>';
    const r = await h.handle(CHANNELS.exportReportPdf, { html, suggestedName: 'report' });
    expect(r.ok).toBe(true);
    expect(fs.readFileSync(p, 'utf8')).toBe(`%PDF-1.7 ${html.length}`);
  });
  it('reveal works only for granted paths', async () => {
    const h = createShellHandlers(services());
    const r = await h.handle(CHANNELS.reveal, { path: path.join(dir, 'x') });
    expect(r.ok).toBe(false);
    expect(revealed).toEqual([]);
  });
  it('recent files from a previous session can be reopened', async () => {
    const p = path.join(dir, 'old.study.json');
    fs.writeFileSync(p, 'old');
    recent = [{ path: p, name: 'old.study.json', kind: 'study', at: 1 }];
    const h = createShellHandlers(services());
    const r = await h.handle(CHANNELS.openRecent, { path: p });
    expect(r.ok && r.value.text).toBe('old');
  });
  it('document state reaches the shell (closing asks when dirty)', async () => {
    const h = createShellHandlers(services());
    await h.handle(CHANNELS.setDocumentState, { dirty: true, title: 'Q3 note' });
    expect(docState).toEqual({ dirty: true, title: 'Q3 note' });
  });
});
