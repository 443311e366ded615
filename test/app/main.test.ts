import { describe, it, expect, beforeAll } from 'vitest';
import { createRequire } from 'node:module';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { BRIDGE_CHANNELS } from '../../src/ui/platform/desktopBridge.ts';

const require = createRequire(import.meta.url);

/** A recording stand-in for the parts of Electron that app/main.cjs uses. */
function fakeElectron() {
  const rec = {
    windows: [] as { opts: any; url?: string; handlers: Record<string, Function> }[],
    ipc: new Map<string, Function>(),
    protocolHandler: null as null | ((req: { url: string }) => Promise<Response>),
    privileged: [] as any[],
    appHandlers: {} as Record<string, Function>,
    beforeRequest: null as null | Function,
    permission: null as null | Function,
    menu: null as any,
    nextSave: null as string | null,
    /** What the print window loaded, whether the file existed then, and whether it was allowed. */
    printed: [] as { url: string; existed: boolean; allowed: boolean }[],
  };
  let ready: () => void = () => {};
  const readyPromise = new Promise<void>((r) => (ready = r));
  class BrowserWindow {
    handlers: Record<string, Function> = {};
    webContents = { send: () => {}, printToPDF: async () => Buffer.from('') };
    constructor(opts: any) {
      rec.windows.push({ opts, handlers: this.handlers });
    }
    once(ev: string, h: Function) {
      this.handlers[ev] = h;
    }
    on(ev: string, h: Function) {
      this.handlers[ev] = h;
    }
    loadURL(url: string) {
      rec.windows[rec.windows.length - 1]!.url = url;
      if (url.startsWith('file:')) {
        let allowed = false;
        rec.beforeRequest?.({ url }, (r: { cancel: boolean }) => (allowed = !r.cancel));
        rec.printed.push({ url, existed: fs.existsSync(fileURLToPath(url)), allowed });
      }
      return Promise.resolve();
    }
    setTitle() {}
    show() {}
    destroy() {}
    static getAllWindows() {
      return rec.windows;
    }
  }
  const electron = {
    app: {
      whenReady: () => readyPromise,
      on: (ev: string, h: Function) => (rec.appHandlers[ev] = h),
      getPath: (name: string) =>
        name === 'temp' ? os.tmpdir() : path.join(os.tmpdir(), 'ft-fake-user-data'),
      quit: () => {},
    },
    BrowserWindow,
    Menu: { buildFromTemplate: (t: any) => t, setApplicationMenu: (m: any) => (rec.menu = m) },
    dialog: {
      showOpenDialog: async () => ({ canceled: true, filePaths: [] }),
      showSaveDialog: async () =>
        rec.nextSave ? { canceled: false, filePath: rec.nextSave } : { canceled: true },
    },
    ipcMain: { handle: (ch: string, h: Function) => rec.ipc.set(ch, h) },
    protocol: {
      registerSchemesAsPrivileged: (s: any[]) => rec.privileged.push(...s),
      handle: (_scheme: string, h: any) => (rec.protocolHandler = h),
    },
    session: {
      defaultSession: {
        webRequest: { onBeforeRequest: (h: Function) => (rec.beforeRequest = h) },
        setPermissionRequestHandler: (h: Function) => (rec.permission = h),
      },
    },
    shell: { showItemInFolder: () => {} },
  };
  return { electron, rec, ready: () => ready() };
}

let rec: ReturnType<typeof fakeElectron>['rec'];

beforeAll(async () => {
  const f = fakeElectron();
  rec = f.rec;
  const electronId = require.resolve('electron');
  const mainId = require.resolve('../../app/main.cjs');
  const saved = require.cache[electronId];
  require.cache[electronId] = {
    id: electronId,
    filename: electronId,
    loaded: true,
    exports: f.electron,
  } as any;
  delete require.cache[mainId];
  try {
    require('../../app/main.cjs');
    f.ready();
    await new Promise((r) => setTimeout(r, 20));
  } finally {
    if (saved) require.cache[electronId] = saved;
    else delete require.cache[electronId];
  }
});

describe('main process wiring', () => {
  it('opens one window with the locked-down options, served from the app scheme', () => {
    expect(rec.windows).toHaveLength(1);
    const w = rec.windows[0]!;
    expect(w.opts.webPreferences).toMatchObject({
      contextIsolation: true,
      nodeIntegration: false,
      sandbox: true,
    });
    expect(w.url).toBe('app://factor-triage/index.html');
    expect(rec.privileged[0].scheme).toBe('app');
  });
  it('registers a handler for every bridge channel and nothing else', () => {
    expect([...rec.ipc.keys()].sort()).toEqual(Object.values(BRIDGE_CHANNELS).sort());
  });
  it('refuses IPC from any page that is not the app', async () => {
    const h = rec.ipc.get(BRIDGE_CHANNELS.recentFiles)!;
    const r = await h({ senderFrame: { url: 'https://elsewhere.invalid/' } }, undefined);
    expect(r.ok).toBe(false);
    expect(r.error.code).toBe('E_IPC_SENDER');
  });
  it('blocks new windows, outside navigation and webviews in every web contents', () => {
    const ev: Record<string, Function> = {};
    let openHandler: Function = () => null;
    rec.appHandlers['web-contents-created']!(
      {},
      {
        setWindowOpenHandler: (h: Function) => (openHandler = h),
        on: (name: string, h: Function) => (ev[name] = h),
      },
    );
    expect(openHandler({ url: 'https://x.invalid' })).toEqual({ action: 'deny' });
    let prevented = false;
    ev['will-navigate']!({ preventDefault: () => (prevented = true) }, 'https://x.invalid/');
    expect(prevented).toBe(true);
    prevented = false;
    ev['will-navigate']!({ preventDefault: () => (prevented = true) }, 'app://factor-triage/index.html');
    expect(prevented).toBe(false);
    prevented = false;
    ev['will-attach-webview']!({ preventDefault: () => (prevented = true) });
    expect(prevented).toBe(true);
  });
  it('cancels every request for remote content and denies all permission requests', () => {
    let out: any = null;
    rec.beforeRequest!({ url: 'https://cdn.invalid/lib.js' }, (r: any) => (out = r));
    expect(out).toEqual({ cancel: true });
    rec.beforeRequest!({ url: 'app://factor-triage/assets/x.js' }, (r: any) => (out = r));
    expect(out).toEqual({ cancel: false });
    let granted: boolean | null = null;
    rec.permission!({}, 'geolocation', (g: boolean) => (granted = g));
    expect(granted).toBe(false);
  });
  it('answers files outside the renderer folder with 404', async () => {
    const r = await rec.protocolHandler!({ url: 'app://factor-triage/x/%2F..%2F..%2F..%2Fpackage.json' });
    expect(r.status).toBe(404);
  });
  it('prints a report to PDF from a private temporary file that only the print window may load, then removes it', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ft-pdf-'));
    rec.nextSave = path.join(dir, 'report.pdf');
    const h = rec.ipc.get(BRIDGE_CHANNELS.exportReportPdf)!;
    const r = await h(
      { senderFrame: { url: 'app://factor-triage/index.html' } },
      { html: '<!doctype html><p>r</p>', suggestedName: 'report' },
    );
    expect(r.ok, JSON.stringify(r)).toBe(true);
    expect(rec.printed, JSON.stringify({ r, windows: rec.windows.map((w) => w.url) })).toHaveLength(1);
    expect(rec.printed[0]).toMatchObject({ existed: true, allowed: true });
    expect(fs.existsSync(fileURLToPath(rec.printed[0]!.url))).toBe(false);
    let after: any = null;
    rec.beforeRequest!({ url: rec.printed[0]!.url }, (x: any) => (after = x));
    expect(after).toEqual({ cancel: true });
    expect(fs.existsSync(rec.nextSave)).toBe(true);
    fs.rmSync(dir, { recursive: true, force: true });
    rec.nextSave = null;
  });
});
