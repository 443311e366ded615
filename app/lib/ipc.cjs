// @ts-check
'use strict';
/**
 * Validation of everything the renderer sends over IPC. The renderer is treated as untrusted:
 * every argument is checked for type, size and shape, and a path is only accepted if the user
 * chose it in a dialog (or from the recent list) during this session.
 */

/** Channel names; must match BRIDGE_CHANNELS in src/ui/platform/desktopBridge.ts (a test checks). */
const CHANNELS = {
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
const MENU_CHANNEL = 'ft:menu';

const FILE_KINDS = ['study', 'deal', 'market', 'csv'];
/** Largest text the renderer may ask the shell to write (bytes of UTF-16 code units). */
const MAX_TEXT = 64 * 1024 * 1024;
const MAX_PATH = 4096;
const MAX_NAME = 200;

/**
 * @typedef {{ ok: true, value: any } | { ok: false, error: { code: string, field: string, message: string } }} Checked
 */

/** @returns {Checked} */
function bad(code, field, message) {
  return { ok: false, error: { code, field, message } };
}
/** @returns {Checked} */
function good(value) {
  return { ok: true, value };
}

function isPlainObject(v) {
  return (
    typeof v === 'object' && v !== null && !Array.isArray(v) && Object.getPrototypeOf(v) === Object.prototype
  );
}

/** @returns {Checked} */
function onlyKeys(arg, keys) {
  if (!isPlainObject(arg)) return bad('E_IPC_SHAPE', 'request', 'the request must be an object');
  for (const k of Object.keys(arg))
    if (!keys.includes(k))
      return bad('E_IPC_SHAPE', k, `unexpected field "${k}"; allowed: ${keys.join(', ')}`);
  return good(arg);
}

/** @returns {Checked} */
function checkKind(v, field = 'kind') {
  if (typeof v !== 'string' || !FILE_KINDS.includes(v))
    return bad('E_IPC_KIND', field, `${field} must be one of ${FILE_KINDS.join(', ')}`);
  return good(v);
}

/** @returns {Checked} */
function checkText(v, field = 'text') {
  if (typeof v !== 'string') return bad('E_IPC_TEXT', field, `${field} must be a string`);
  if (v.length > MAX_TEXT)
    return bad('E_IPC_TOO_LARGE', field, `${field} is larger than ${MAX_TEXT} characters`);
  return good(v);
}

/**
 * A file name proposed for a save dialog: one path segment, no separators or control characters.
 * @returns {Checked}
 */
function checkSuggestedName(v, field = 'suggestedName') {
  if (typeof v !== 'string' || v.length === 0 || v.length > MAX_NAME)
    return bad('E_IPC_NAME', field, `${field} must be a file name of 1 to ${MAX_NAME} characters`);
  // eslint-disable-next-line no-control-regex
  if (/[\\/:*?"<>|\u0000-\u001f]/.test(v) || v === '.' || v === '..')
    return bad(
      'E_IPC_NAME',
      field,
      `${field} must be a plain file name without folders or special characters`,
    );
  return good(v);
}

/**
 * A path must be absolute, of sane length, and one the user granted in this session.
 * @param {unknown} v
 * @param {Set<string>} granted
 * @param {(p: string) => boolean} isAbsolute
 * @returns {Checked}
 */
function checkGrantedPath(v, granted, isAbsolute, field = 'path') {
  if (typeof v !== 'string' || v.length === 0 || v.length > MAX_PATH)
    return bad('E_IPC_PATH', field, `${field} must be a file path of 1 to ${MAX_PATH} characters`);
  if (v.includes('\0') || !isAbsolute(v))
    return bad('E_IPC_PATH', field, `${field} must be an absolute file path`);
  if (!granted.has(v))
    return bad(
      'E_IPC_NOT_GRANTED',
      field,
      `${field} was not chosen in a file dialog during this session; use Save as to pick a location`,
    );
  return good(v);
}

/**
 * Validates the argument of one request channel.
 * @param {string} channel
 * @param {any} arg untrusted: checked field by field below
 * @param {{ granted: Set<string>, isAbsolute: (p: string) => boolean }} ctx
 * @returns {Checked}
 */
function validateRequest(channel, arg, ctx) {
  /** @type {Checked} */
  let c;
  switch (channel) {
    case CHANNELS.openFile:
      if (!(c = onlyKeys(arg, ['kind'])).ok) return c;
      if (!(c = checkKind(arg.kind)).ok) return c;
      return good({ kind: arg.kind });
    case CHANNELS.openRecent:
    case CHANNELS.reveal:
      if (!(c = onlyKeys(arg, ['path'])).ok) return c;
      if (!(c = checkGrantedPath(arg.path, ctx.granted, ctx.isAbsolute)).ok) return c;
      return good({ path: arg.path });
    case CHANNELS.save:
      if (!(c = onlyKeys(arg, ['path', 'text'])).ok) return c;
      if (!(c = checkGrantedPath(arg.path, ctx.granted, ctx.isAbsolute)).ok) return c;
      if (!(c = checkText(arg.text)).ok) return c;
      return good({ path: arg.path, text: arg.text });
    case CHANNELS.saveAs:
      if (!(c = onlyKeys(arg, ['kind', 'suggestedName', 'text'])).ok) return c;
      if (!(c = checkKind(arg.kind)).ok) return c;
      if (!(c = checkSuggestedName(arg.suggestedName)).ok) return c;
      if (!(c = checkText(arg.text)).ok) return c;
      return good({ kind: arg.kind, suggestedName: arg.suggestedName, text: arg.text });
    case CHANNELS.exportReportPdf:
    case CHANNELS.exportReportHtml:
      if (!(c = onlyKeys(arg, ['html', 'suggestedName'])).ok) return c;
      if (!(c = checkText(arg.html, 'html')).ok) return c;
      if (!/^\s*<!doctype html/i.test(arg.html))
        return bad(
          'E_IPC_HTML',
          'html',
          'html must be a complete HTML document starting with <!doctype html>',
        );
      if (!(c = checkSuggestedName(arg.suggestedName)).ok) return c;
      return good({ html: arg.html, suggestedName: arg.suggestedName });
    case CHANNELS.recentFiles:
      if (arg !== undefined && arg !== null && !(isPlainObject(arg) && Object.keys(arg).length === 0))
        return bad('E_IPC_SHAPE', 'request', 'recentFiles takes no arguments');
      return good(null);
    case CHANNELS.setDocumentState:
      if (!(c = onlyKeys(arg, ['dirty', 'title'])).ok) return c;
      if (typeof arg.dirty !== 'boolean') return bad('E_IPC_SHAPE', 'dirty', 'dirty must be true or false');
      if (typeof arg.title !== 'string' || arg.title.length > MAX_NAME)
        return bad('E_IPC_SHAPE', 'title', `title must be a string of at most ${MAX_NAME} characters`);
      return good({ dirty: arg.dirty, title: arg.title });
    default:
      return bad('E_IPC_CHANNEL', 'channel', `unknown channel "${String(channel)}"`);
  }
}

/**
 * Only the app's own top frame may call the shell.
 * @param {string | undefined} senderUrl
 * @param {(url: string) => boolean} isAppUrl
 * @returns {Checked}
 */
function validateSender(senderUrl, isAppUrl) {
  if (typeof senderUrl !== 'string' || !isAppUrl(senderUrl))
    return bad('E_IPC_SENDER', 'sender', 'requests are only accepted from the application window');
  return good(senderUrl);
}

module.exports = {
  CHANNELS,
  MENU_CHANNEL,
  FILE_KINDS,
  MAX_TEXT,
  validateRequest,
  validateSender,
  checkSuggestedName,
  checkGrantedPath,
};
