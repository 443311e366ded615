// @ts-check
'use strict';
/**
 * Preload bridge: the only door between the sandboxed renderer and the shell. It exposes one small
 * object, `window.factorTriage`, whose shape is checked against DesktopBridge (src/ui/platform/desktopBridge.ts).
 * A sandboxed preload can only require 'electron', so the channel names are repeated here; a unit
 * test checks that they match the shared table.
 */
const { contextBridge, ipcRenderer } = require('electron');

const CH = {
  openFile: 'ft:open-file',
  openRecent: 'ft:open-recent',
  save: 'ft:save',
  saveAs: 'ft:save-as',
  recentFiles: 'ft:recent-files',
  exportReportPdf: 'ft:export-pdf',
  exportReportHtml: 'ft:export-html',
  reveal: 'ft:reveal',
  setDocumentState: 'ft:document-state',
};
const MENU = 'ft:menu';
const MENU_COMMANDS = ['open', 'save', 'save-as', 'export-html', 'export-pdf'];

const bridge = /** @satisfies {import('../src/ui/platform/desktopBridge.ts').DesktopBridge} */ ({
  openFile: (req) => ipcRenderer.invoke(CH.openFile, { kind: req.kind }),
  openRecent: (req) => ipcRenderer.invoke(CH.openRecent, { path: req.path }),
  save: (req) => ipcRenderer.invoke(CH.save, { path: req.path, text: req.text }),
  saveAs: (req) =>
    ipcRenderer.invoke(CH.saveAs, { kind: req.kind, suggestedName: req.suggestedName, text: req.text }),
  recentFiles: () => ipcRenderer.invoke(CH.recentFiles),
  exportReportPdf: (req) =>
    ipcRenderer.invoke(CH.exportReportPdf, { html: req.html, suggestedName: req.suggestedName }),
  exportReportHtml: (req) =>
    ipcRenderer.invoke(CH.exportReportHtml, { html: req.html, suggestedName: req.suggestedName }),
  reveal: (req) => ipcRenderer.invoke(CH.reveal, { path: req.path }),
  setDocumentState: (req) => ipcRenderer.invoke(CH.setDocumentState, { dirty: req.dirty, title: req.title }),
  onMenuCommand: (listener) => {
    /** @param {unknown} _e @param {unknown} cmd */
    const h = (_e, cmd) => {
      if (typeof cmd === 'string' && MENU_COMMANDS.includes(cmd)) listener(/** @type {any} */ (cmd));
    };
    ipcRenderer.on(MENU, h);
    return () => {
      ipcRenderer.removeListener(MENU, h);
    };
  },
});

contextBridge.exposeInMainWorld('factorTriage', bridge);

module.exports = { CH, MENU, bridge };
