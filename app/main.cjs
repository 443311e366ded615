// @ts-check
'use strict';
/**
 * Electron main process: one locked-down window serving the built renderer (dist/desktop) from the
 * app:// scheme, a native menu, and the file/PDF services behind the preload bridge. All logic
 * worth testing lives in app/lib/*.cjs; this file only wires it to Electron.
 */
const path = require('node:path');
const fs = require('node:fs');
const { app, BrowserWindow, Menu, dialog, ipcMain, protocol, session, shell } = require('electron');
const sec = require('./lib/security.cjs');
const { CHANNELS, MENU_CHANNEL, validateSender } = require('./lib/ipc.cjs');
const { createShellHandlers } = require('./lib/shellHandlers.cjs');
const recent = require('./lib/recentFiles.cjs');
const { writeFileAtomic } = require('./lib/atomicWrite.cjs');
const { pathToFileURL } = require('node:url');

const RENDERER_ROOT = path.join(__dirname, '..', 'dist', 'desktop');

protocol.registerSchemesAsPrivileged([
  // standard + secure: an origin of its own (storage, 'self' in the CSP); corsEnabled: module scripts and the module worker load.
  {
    scheme: sec.APP_SCHEME,
    privileges: { standard: true, secure: true, supportFetchAPI: true, corsEnabled: true },
  },
]);

/** @type {BrowserWindow | null} */
let mainWindow = null;
let documentState = { dirty: false, title: 'Factor Triage' };
let closeConfirmed = false;

function recentFile() {
  return path.join(app.getPath('userData'), 'recent-files.json');
}

/** file:// URLs of reports being printed right now: the only local files any window may load. */
const printing = new Set();

async function printToPdf(html) {
  // A report can exceed the length a data: URL may have, so it is printed from a private temporary file.
  const dir = fs.mkdtempSync(path.join(app.getPath('temp'), 'factor-triage-print-'));
  const file = path.join(dir, 'report.html');
  writeFileAtomic(file, html);
  const url = pathToFileURL(file).href;
  printing.add(url);
  const win = new BrowserWindow(sec.printWindowOptions());
  try {
    await win.loadURL(url);
    return await win.webContents.printToPDF({ printBackground: true, pageSize: 'A4' });
  } finally {
    win.destroy();
    printing.delete(url);
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

const handlers = createShellHandlers({
  fs,
  now: () => Date.now(),
  loadRecent: () => recent.loadRecent(recentFile(), fs),
  storeRecent: (list) => recent.storeRecent(recentFile(), list),
  revealInFolder: (p) => shell.showItemInFolder(p),
  printToPdf,
  setDocumentState: (s) => {
    documentState = s;
    if (mainWindow) mainWindow.setTitle(`${s.dirty ? '• ' : ''}${s.title} — Factor Triage`);
  },
  showOpenDialog: async ({ title, filters }) => {
    /** @type {Electron.OpenDialogOptions} */
    const o = { title, filters, properties: ['openFile'] };
    const r = await (mainWindow ? dialog.showOpenDialog(mainWindow, o) : dialog.showOpenDialog(o));
    return r.canceled || r.filePaths.length === 0 ? null : r.filePaths[0];
  },
  showSaveDialog: async ({ title, defaultName, filters }) => {
    /** @type {Electron.SaveDialogOptions} */
    const o = { title, defaultPath: path.join(app.getPath('documents'), defaultName), filters };
    const r = await (mainWindow ? dialog.showSaveDialog(mainWindow, o) : dialog.showSaveDialog(o));
    return r.canceled || !r.filePath ? null : r.filePath;
  },
});

for (const channel of Object.values(CHANNELS)) {
  ipcMain.handle(channel, async (event, arg) => {
    const sender = validateSender(event.senderFrame?.url, sec.isAppUrl);
    if (!sender.ok) return sender;
    return handlers.handle(channel, arg);
  });
}

function sendMenu(cmd) {
  if (mainWindow) mainWindow.webContents.send(MENU_CHANNEL, cmd);
}

function buildMenu() {
  const isMac = process.platform === 'darwin';
  /** @type {Electron.MenuItemConstructorOptions[]} */
  const template = [
    ...(isMac ? [{ role: /** @type {const} */ ('appMenu') }] : []),
    {
      label: 'File',
      submenu: [
        { label: 'Open study…', accelerator: 'CmdOrCtrl+O', click: () => sendMenu('open') },
        { label: 'Save study', accelerator: 'CmdOrCtrl+S', click: () => sendMenu('save') },
        { label: 'Save study as…', accelerator: 'CmdOrCtrl+Shift+S', click: () => sendMenu('save-as') },
        { type: 'separator' },
        { label: 'Export report as HTML…', click: () => sendMenu('export-html') },
        { label: 'Export report as PDF…', accelerator: 'CmdOrCtrl+P', click: () => sendMenu('export-pdf') },
        { type: 'separator' },
        isMac ? { role: 'close' } : { role: 'quit' },
      ],
    },
    { role: 'editMenu' },
    {
      label: 'View',
      submenu: [{ role: 'resetZoom' }, { role: 'zoomIn' }, { role: 'zoomOut' }, { role: 'togglefullscreen' }],
    },
  ];
  Menu.setApplicationMenu(Menu.buildFromTemplate(template));
}

function createWindow() {
  mainWindow = new BrowserWindow(sec.mainWindowOptions({ preloadPath: path.join(__dirname, 'preload.cjs') }));
  mainWindow.once('ready-to-show', () => mainWindow && mainWindow.show());
  mainWindow.on('close', (e) => {
    if (!documentState.dirty || closeConfirmed || !mainWindow) return;
    const choice = dialog.showMessageBoxSync(mainWindow, {
      type: 'warning',
      buttons: ['Keep working', 'Close without saving'],
      defaultId: 0,
      cancelId: 0,
      message: 'There are unsaved changes.',
      detail: 'Your draft is kept and reopens next time, but it is not saved to a study file.',
    });
    if (choice === 0) e.preventDefault();
    else closeConfirmed = true;
  });
  mainWindow.on('closed', () => {
    mainWindow = null;
  });
  mainWindow.loadURL(`${sec.APP_ORIGIN}/index.html`);
}

app.on('web-contents-created', (_e, contents) => {
  contents.setWindowOpenHandler(() => ({ action: 'deny' }));
  contents.on('will-navigate', (e, url) => {
    if (!sec.isAppUrl(url)) e.preventDefault();
  });
  contents.on('will-redirect', (e, url) => {
    if (!sec.isAppUrl(url)) e.preventDefault();
  });
  contents.on('will-attach-webview', (e) => e.preventDefault());
});

app.whenReady().then(() => {
  const csp = sec.contentSecurityPolicy();
  protocol.handle(sec.APP_SCHEME, async (request) => {
    const file = sec.resolveAppFile(request.url, RENDERER_ROOT, path);
    if (!file || !fs.existsSync(file) || !fs.statSync(file).isFile())
      return new Response('not found', { status: 404, headers: { 'content-type': 'text/plain' } });
    return new Response(fs.readFileSync(file), {
      headers: {
        'content-type': sec.mimeType(file),
        'content-security-policy': csp,
        'x-content-type-options': 'nosniff',
      },
    });
  });
  // No remote content: every request that is not the app's own scheme (or a report being printed) is cancelled.
  session.defaultSession.webRequest.onBeforeRequest((details, cb) => {
    const ok =
      details.url.startsWith(`${sec.APP_ORIGIN}/`) ||
      details.url.startsWith('data:') ||
      details.url.startsWith('devtools:') ||
      printing.has(details.url);
    cb({ cancel: !ok });
  });
  session.defaultSession.setPermissionRequestHandler((_wc, _perm, cb) => cb(false));
  buildMenu();
  createWindow();
  app.on('activate', () => {
    if (BrowserWindow.getAllWindows().length === 0) createWindow();
  });
});

app.on('window-all-closed', () => {
  if (process.platform !== 'darwin') app.quit();
});
