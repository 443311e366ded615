// @ts-check
'use strict';
/**
 * Security settings of the desktop window, as plain data so they can be tested without Electron.
 * Renderer: context isolation on, Node integration off, sandboxed, no webviews, no remote content.
 */

/** The custom scheme the renderer is served from (never file:// or http://). */
const APP_SCHEME = 'app';
const APP_HOST = 'factor-triage';
const APP_ORIGIN = `${APP_SCHEME}://${APP_HOST}`;

/**
 * Content-Security-Policy of every page the shell serves. Scripts, styles, workers and connections only
 * from the app's own origin; no inline script, no eval, no objects, no frames, no remote hosts.
 * @returns {string}
 */
function contentSecurityPolicy() {
  return [
    "default-src 'none'",
    "script-src 'self'",
    "style-src 'self'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    "connect-src 'self'",
    "worker-src 'self'",
    "child-src 'none'",
    "frame-src 'none'",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'none'",
    "frame-ancestors 'none'",
  ].join('; ');
}

/**
 * Options of the main window.
 * @param {{ preloadPath: string }} opts absolute path of the preload script
 */
function mainWindowOptions(opts) {
  if (!opts || typeof opts.preloadPath !== 'string' || opts.preloadPath.length === 0)
    throw new Error('mainWindowOptions: preloadPath must be the absolute path of the preload script');
  return {
    width: 1280,
    height: 800,
    minWidth: 1024,
    minHeight: 680,
    show: false,
    title: 'Factor Triage',
    backgroundColor: '#f4f1ea',
    webPreferences: {
      preload: opts.preloadPath,
      contextIsolation: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      nodeIntegrationInSubFrames: false,
      sandbox: true,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      navigateOnDragDrop: false,
      spellcheck: false,
      safeDialogs: true,
    },
  };
}

/**
 * Options of the hidden window that prints a report to PDF: no preload, no scripts, sandboxed.
 */
function printWindowOptions() {
  return {
    show: false,
    width: 900,
    height: 1200,
    webPreferences: {
      contextIsolation: true,
      nodeIntegration: false,
      sandbox: true,
      javascript: false,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
    },
  };
}

/**
 * True when a URL belongs to the app itself; everything else is refused for navigation.
 * @param {string} url
 */
function isAppUrl(url) {
  try {
    const u = new URL(url);
    return u.protocol === `${APP_SCHEME}:` && u.host === APP_HOST;
  } catch {
    return false;
  }
}

/**
 * Maps an app:// URL to a file inside `root`, refusing anything that escapes it (`..`, encoded slashes).
 * Returns null for a URL that is not the app's or that leaves the root.
 * @param {string} url
 * @param {string} root absolute folder of the built renderer
 * @param {{ join: (...p: string[]) => string, resolve: (...p: string[]) => string, sep: string }} pathApi
 * @returns {string | null}
 */
function resolveAppFile(url, root, pathApi) {
  if (!isAppUrl(url)) return null;
  let pathname;
  try {
    pathname = decodeURIComponent(new URL(url).pathname);
  } catch {
    return null;
  }
  if (pathname.includes('\0') || pathname.includes('\\')) return null;
  if (pathname === '/' || pathname === '') pathname = '/index.html';
  const rootAbs = pathApi.resolve(root);
  const file = pathApi.resolve(rootAbs, '.' + pathname);
  if (file !== rootAbs && !file.startsWith(rootAbs + pathApi.sep)) return null;
  return file;
}

/** Content type by file extension for the files the renderer build contains. */
const MIME = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.woff2': 'font/woff2',
};

/** @param {string} file */
function mimeType(file) {
  const i = file.lastIndexOf('.');
  const ext = i >= 0 ? file.slice(i).toLowerCase() : '';
  return /** @type {Record<string,string>} */ (MIME)[ext] ?? 'application/octet-stream';
}

module.exports = {
  APP_SCHEME,
  APP_HOST,
  APP_ORIGIN,
  contentSecurityPolicy,
  mainWindowOptions,
  printWindowOptions,
  isAppUrl,
  resolveAppFile,
  mimeType,
};
