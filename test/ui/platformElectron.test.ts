import { describe, it, expect, beforeEach, afterEach } from 'vitest';
import type { BridgeResult, DesktopBridge } from '../../src/ui/platform/desktopBridge.ts';
import { platform } from '../../src/ui/platform/platform.electron.ts';
import { PlatformError } from '../../src/ui/platform/platform.ts';

const calls: { method: string; req: unknown }[] = [];
const ok = <T>(value: T): Promise<BridgeResult<T>> => Promise.resolve({ ok: true, value });

function fakeBridge(over: Partial<DesktopBridge> = {}): DesktopBridge {
  const rec =
    (method: string, value: unknown) =>
    (req?: unknown): Promise<BridgeResult<any>> => {
      calls.push({ method, req });
      return ok(value);
    };
  return {
    openFile: rec('openFile', { path: '/s/q3.study.json', name: 'q3.study.json', text: '{}' }),
    openRecent: rec('openRecent', { path: '/s/q3.study.json', name: 'q3.study.json', text: '{}' }),
    save: rec('save', { path: '/s/q3.study.json', name: 'q3.study.json' }),
    saveAs: rec('saveAs', { path: '/s/new.study.json', name: 'new.study.json' }),
    recentFiles: rec('recentFiles', []),
    exportReportPdf: rec('exportReportPdf', { path: '/s/r.pdf', name: 'r.pdf' }),
    exportReportHtml: rec('exportReportHtml', { path: '/s/r.html', name: 'r.html' }),
    reveal: rec('reveal', null),
    setDocumentState: rec('setDocumentState', null),
    onMenuCommand: () => () => {},
    ...over,
  };
}

const g = globalThis as unknown as { window?: { factorTriage?: DesktopBridge } };
beforeEach(() => {
  calls.length = 0;
  g.window = { factorTriage: fakeBridge() };
});
afterEach(() => {
  delete g.window;
});

describe('desktop platform', () => {
  it('opens through the native dialog and keeps the path to save back to', async () => {
    expect(await platform.pickFile('study')).toEqual({
      name: 'q3.study.json',
      text: '{}',
      handle: '/s/q3.study.json',
    });
    expect(calls).toEqual([{ method: 'openFile', req: { kind: 'study' } }]);
  });
  it('saves in place when the document has a path, and through save-as otherwise', async () => {
    await platform.saveFile({ kind: 'study', suggestedName: 'q3', text: 'a', handle: '/s/q3.study.json' });
    await platform.saveFile({ kind: 'study', suggestedName: 'new', text: 'b', handle: null });
    expect(calls.map((c) => c.method)).toEqual(['save', 'saveAs']);
  });
  it('exports PDF and HTML through their own channels', async () => {
    await platform.exportReport({ html: '<!doctype html>', suggestedName: 'r', format: 'pdf' });
    await platform.exportReport({ html: '<!doctype html>', suggestedName: 'r', format: 'html' });
    expect(calls.map((c) => c.method)).toEqual(['exportReportPdf', 'exportReportHtml']);
  });
  it('turns a refusal from the shell into an error carrying its code and message', async () => {
    g.window = {
      factorTriage: fakeBridge({
        save: () =>
          Promise.resolve({
            ok: false,
            error: { code: 'E_IPC_NOT_GRANTED', field: 'path', message: 'path was not chosen' },
          }),
      }),
    };
    const e = await platform
      .saveFile({ kind: 'study', suggestedName: 'x', text: 'a', handle: '/etc/x' })
      .catch((x: unknown) => x);
    expect(e).toBeInstanceOf(PlatformError);
    expect((e as PlatformError).code).toBe('E_IPC_NOT_GRANTED');
  });
  it('says how to start the app when the bridge is missing', async () => {
    delete g.window;
    g.window = {};
    await expect(platform.pickFile('study')).rejects.toThrow(/npm start/);
  });
});
