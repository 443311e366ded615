// @ts-check
'use strict';
/**
 * The desktop shell's request handlers, written against injected services (dialogs, file system,
 * file manager, PDF printer) so they run and are tested without Electron. main.cjs wires them to
 * ipcMain with the real services. Each handler validates its argument first and returns a plain
 * result ({ ok, value } or { ok: false, error }); nothing is thrown across the bridge.
 */
const nodePath = require('node:path');
const { CHANNELS, validateRequest } = require('./ipc.cjs');
const { writeFileAtomic } = require('./atomicWrite.cjs');
const { addRecent } = require('./recentFiles.cjs');

/** Dialog filters and default extension per file kind. */
const KIND_FILTERS = {
  study: { name: 'Factor study', extensions: ['json'], ext: '.study.json' },
  deal: { name: 'Deal description', extensions: ['json'], ext: '.deal.json' },
  market: { name: 'Market snapshot', extensions: ['json'], ext: '.json' },
  csv: { name: 'Table (CSV)', extensions: ['csv', 'txt'], ext: '.csv' },
};

/** Largest file the shell opens (bytes). */
const MAX_OPEN_BYTES = 64 * 1024 * 1024;

/**
 * @typedef {object} ShellServices
 * @property {(o: { title: string, filters: {name: string, extensions: string[]}[] }) => Promise<string | null>} showOpenDialog
 * @property {(o: { title: string, defaultName: string, filters: {name: string, extensions: string[]}[] }) => Promise<string | null>} showSaveDialog
 * @property {typeof import('node:fs')} fs
 * @property {(path: string) => void} revealInFolder
 * @property {(html: string) => Promise<Buffer>} printToPdf
 * @property {() => import('./recentFiles.cjs').RecentFile[]} loadRecent
 * @property {(list: import('./recentFiles.cjs').RecentFile[]) => void} storeRecent
 * @property {(state: { dirty: boolean, title: string }) => void} setDocumentState
 * @property {() => number} now
 */

function fail(code, field, message) {
  return { ok: false, error: { code, field, message } };
}

function kindOfPath(p) {
  if (/\.study\.json$/i.test(p)) return 'study';
  if (/\.deal\.json$/i.test(p)) return 'deal';
  if (/\.(csv|txt)$/i.test(p)) return 'csv';
  return 'market';
}

/**
 * @param {ShellServices} svc
 * @returns {{ granted: Set<string>, handle: (channel: string, arg: unknown) => Promise<any> }}
 */
function createShellHandlers(svc) {
  /** Paths the user picked in a dialog or from the recent list during this session. */
  const granted = new Set(svc.loadRecent().map((r) => r.path));
  const ctx = { granted, isAbsolute: nodePath.isAbsolute };

  function remember(p, kind) {
    granted.add(p);
    const list = addRecent(svc.loadRecent(), { path: p, name: nodePath.basename(p), kind, at: svc.now() });
    try {
      svc.storeRecent(list);
    } catch {
      /* a recent list that cannot be written is not worth failing the user's action */
    }
  }

  function readText(p) {
    const st = svc.fs.statSync(p);
    if (!st.isFile()) return fail('E_FILE_NOT_FILE', 'path', `${p} is not a file`);
    if (st.size > MAX_OPEN_BYTES)
      return fail('E_FILE_TOO_LARGE', 'path', `${p} is larger than ${MAX_OPEN_BYTES / 1048576} MB`);
    return { ok: true, value: { path: p, name: nodePath.basename(p), text: svc.fs.readFileSync(p, 'utf8') } };
  }

  function writeText(p, text, kind) {
    try {
      writeFileAtomic(p, text, { fs: svc.fs });
    } catch (e) {
      return fail('E_FILE_WRITE', 'path', `could not write ${p}: ${/** @type {Error} */ (e).message}`);
    }
    remember(p, kind);
    return { ok: true, value: { path: p, name: nodePath.basename(p) } };
  }

  function withExt(name, ext) {
    return name.toLowerCase().endsWith(ext) ? name : name + ext;
  }

  /** @type {Record<string, (a: any) => Promise<any>>} */
  const table = {
    [CHANNELS.openFile]: async ({ kind }) => {
      const f = KIND_FILTERS[kind];
      const p = await svc.showOpenDialog({ title: `Open ${f.name.toLowerCase()}`, filters: [f] });
      if (!p) return { ok: true, value: null };
      try {
        const r = readText(p);
        if (r.ok) remember(p, kind);
        return r;
      } catch (e) {
        return fail('E_FILE_READ', 'path', `could not read ${p}: ${/** @type {Error} */ (e).message}`);
      }
    },
    [CHANNELS.openRecent]: async ({ path }) => {
      try {
        const r = readText(path);
        if (r.ok) remember(path, kindOfPath(path));
        return r;
      } catch (e) {
        return fail('E_FILE_READ', 'path', `could not read ${path}: ${/** @type {Error} */ (e).message}`);
      }
    },
    [CHANNELS.save]: async ({ path, text }) => writeText(path, text, kindOfPath(path)),
    [CHANNELS.saveAs]: async ({ kind, suggestedName, text }) => {
      const f = KIND_FILTERS[kind];
      const p = await svc.showSaveDialog({
        title: `Save ${f.name.toLowerCase()}`,
        defaultName: withExt(suggestedName, f.ext),
        filters: [f],
      });
      if (!p) return { ok: true, value: null };
      return writeText(p, text, kind);
    },
    [CHANNELS.recentFiles]: async () => ({ ok: true, value: svc.loadRecent() }),
    [CHANNELS.exportReportHtml]: async ({ html, suggestedName }) => {
      const p = await svc.showSaveDialog({
        title: 'Export report (HTML)',
        defaultName: withExt(suggestedName, '.html'),
        filters: [{ name: 'Web page', extensions: ['html'] }],
      });
      if (!p) return { ok: true, value: null };
      try {
        writeFileAtomic(p, html, { fs: svc.fs });
      } catch (e) {
        return fail('E_FILE_WRITE', 'path', `could not write ${p}: ${/** @type {Error} */ (e).message}`);
      }
      granted.add(p);
      return { ok: true, value: { path: p, name: nodePath.basename(p) } };
    },
    [CHANNELS.exportReportPdf]: async ({ html, suggestedName }) => {
      const p = await svc.showSaveDialog({
        title: 'Export report (PDF)',
        defaultName: withExt(suggestedName, '.pdf'),
        filters: [{ name: 'PDF document', extensions: ['pdf'] }],
      });
      if (!p) return { ok: true, value: null };
      let pdf;
      try {
        pdf = await svc.printToPdf(html);
      } catch (e) {
        return fail('E_PDF', 'html', `the report could not be printed: ${/** @type {Error} */ (e).message}`);
      }
      try {
        writeFileAtomic(p, pdf, { fs: svc.fs });
      } catch (e) {
        return fail('E_FILE_WRITE', 'path', `could not write ${p}: ${/** @type {Error} */ (e).message}`);
      }
      granted.add(p);
      return { ok: true, value: { path: p, name: nodePath.basename(p) } };
    },
    [CHANNELS.reveal]: async ({ path }) => {
      svc.revealInFolder(path);
      return { ok: true, value: null };
    },
    [CHANNELS.setDocumentState]: async (state) => {
      svc.setDocumentState(state);
      return { ok: true, value: null };
    },
  };

  return {
    granted,
    async handle(channel, arg) {
      const checked = validateRequest(channel, arg, ctx);
      if (!checked.ok) return checked;
      const h = table[channel];
      if (!h) return fail('E_IPC_CHANNEL', 'channel', `unknown channel "${channel}"`);
      try {
        return await h(checked.value);
      } catch (e) {
        return fail('E_SHELL', 'request', /** @type {Error} */ (e).message ?? String(e));
      }
    },
  };
}

module.exports = { createShellHandlers, KIND_FILTERS };
