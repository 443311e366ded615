/** Desktop implementation of the platform seam: native dialogs and atomic writes through the preload bridge. */
import type { BridgeResult, DesktopBridge } from './desktopBridge.ts';
import { localDrafts, PlatformError, type Platform } from './platform.ts';

declare global {
  interface Window {
    factorTriage?: DesktopBridge;
  }
}

function bridge(): DesktopBridge {
  const b = window.factorTriage;
  if (!b)
    throw new PlatformError('E_NO_BRIDGE', 'the desktop bridge is missing: start the app with `npm start`');
  return b;
}

async function unwrap<T>(p: Promise<BridgeResult<T>>): Promise<T> {
  const r = await p;
  if (r.ok) return r.value;
  throw new PlatformError(r.error.code, r.error.message);
}

export const platform: Platform = {
  kind: 'desktop',
  canExportPdf: true,
  canSaveInPlace: true,
  async pickFile(kind) {
    const f = await unwrap(bridge().openFile({ kind }));
    return f ? { name: f.name, text: f.text, handle: f.path } : null;
  },
  async saveFile({ kind, suggestedName, text, handle }) {
    const r = handle
      ? await unwrap(bridge().save({ path: handle, text }))
      : await unwrap(bridge().saveAs({ kind, suggestedName, text }));
    return r ? { name: r.name, handle: r.path } : null;
  },
  async exportReport({ html, suggestedName, format }) {
    const r =
      format === 'pdf'
        ? await unwrap(bridge().exportReportPdf({ html, suggestedName }))
        : await unwrap(bridge().exportReportHtml({ html, suggestedName }));
    return r ? { name: r.name, handle: r.path } : null;
  },
  recentFiles: () => unwrap(bridge().recentFiles()),
  async openRecent(handle) {
    const f = await unwrap(bridge().openRecent({ path: handle }));
    return { name: f.name, text: f.text, handle: f.path };
  },
  async reveal(handle) {
    await unwrap(bridge().reveal({ path: handle }));
  },
  setDocumentState(state) {
    void bridge().setDocumentState(state);
  },
  onMenuCommand: (listener) => bridge().onMenuCommand(listener),
  drafts: localDrafts(typeof localStorage === 'undefined' ? null : localStorage),
};
