import { describe, it, expect } from 'vitest';
import path from 'node:path';
import {
  contentSecurityPolicy,
  mainWindowOptions,
  printWindowOptions,
  isAppUrl,
  resolveAppFile,
  mimeType,
} from '../../app/lib/security.cjs';

// Checks follow the Electron security checklist (electronjs.org, "Security", sections on context
// isolation, sandbox, node integration, CSP, navigation and new windows) — common practice.
function directives(csp: string): Map<string, string[]> {
  const m = new Map<string, string[]>();
  for (const part of csp.split(';')) {
    const [name, ...values] = part.trim().split(/\s+/);
    if (name) m.set(name, values);
  }
  return m;
}

describe('main window options', () => {
  const o = mainWindowOptions({ preloadPath: '/abs/preload.cjs' });
  it('isolate the renderer: context isolation on, node integration off everywhere, sandbox on', () => {
    expect(o.webPreferences.contextIsolation).toBe(true);
    expect(o.webPreferences.nodeIntegration).toBe(false);
    expect(o.webPreferences.nodeIntegrationInWorker).toBe(false);
    expect(o.webPreferences.nodeIntegrationInSubFrames).toBe(false);
    expect(o.webPreferences.sandbox).toBe(true);
  });
  it('keep web security on and forbid insecure content and webviews', () => {
    expect(o.webPreferences.webSecurity).toBe(true);
    expect(o.webPreferences.allowRunningInsecureContent).toBe(false);
    expect(o.webPreferences.webviewTag).toBe(false);
    expect(o.webPreferences.navigateOnDragDrop).toBe(false);
  });
  it('use the given preload and open at a size that fits 1280 x 800', () => {
    expect(o.webPreferences.preload).toBe('/abs/preload.cjs');
    expect(o.width).toBeLessThanOrEqual(1280);
    expect(o.height).toBeLessThanOrEqual(800);
  });
  it('refuse a missing preload path with a message naming it', () => {
    expect(() => mainWindowOptions({ preloadPath: '' })).toThrow(/preloadPath/);
  });
  it('print window runs no script and is sandboxed', () => {
    const p = printWindowOptions();
    expect(p.webPreferences.javascript).toBe(false);
    expect(p.webPreferences.sandbox).toBe(true);
    expect(p.webPreferences.preload).toBeUndefined();
  });
});

describe('content security policy', () => {
  const d = directives(contentSecurityPolicy());
  it('defaults to nothing and allows scripts only from the app itself', () => {
    expect(d.get('default-src')).toEqual(["'none'"]);
    expect(d.get('script-src')).toEqual(["'self'"]);
  });
  it('allows no inline script, no eval, no remote host in any directive', () => {
    for (const [name, values] of d) {
      for (const v of values) {
        expect(v, `${name} ${v}`).not.toMatch(/unsafe-inline|unsafe-eval|wasm-unsafe|https?:|\*/);
      }
    }
  });
  it('blocks objects, frames, base and form targets', () => {
    expect(d.get('object-src')).toEqual(["'none'"]);
    expect(d.get('frame-src')).toEqual(["'none'"]);
    expect(d.get('base-uri')).toEqual(["'none'"]);
    expect(d.get('form-action')).toEqual(["'none'"]);
    expect(d.get('frame-ancestors')).toEqual(["'none'"]);
  });
  it('lets the engine worker load from the app origin only', () => {
    expect(d.get('worker-src')).toEqual(["'self'"]);
  });
});

describe('app URLs', () => {
  it('accept only the app scheme and host', () => {
    expect(isAppUrl('app://factor-triage/index.html')).toBe(true);
    for (const u of [
      'https://factor-triage/index.html',
      'file:///etc/passwd',
      'app://other/x',
      'not a url',
      '',
    ])
      expect(isAppUrl(u), u).toBe(false);
  });
  it('map to files inside the renderer folder and never outside it', () => {
    const root = path.resolve('/srv/ft/dist/web');
    expect(resolveAppFile('app://factor-triage/', root, path)).toBe(path.join(root, 'index.html'));
    expect(resolveAppFile('app://factor-triage/assets/a.js', root, path)).toBe(
      path.join(root, 'assets/a.js'),
    );
    for (const u of [
      'app://factor-triage/../secret',
      'app://factor-triage/%2e%2e/%2e%2e/etc/passwd',
      'app://factor-triage/assets/..%2f..%2f..%2fetc',
      'app://factor-triage/a%00b',
      'app://factor-triage/a%5cb',
      'https://factor-triage/index.html',
    ]) {
      const r = resolveAppFile(u, root, path);
      expect(r === null || r.startsWith(root + path.sep), `${u} -> ${r}`).toBe(true);
    }
    // A raw '..' that survives URL parsing is refused outright.
    expect(resolveAppFile('app://factor-triage/x/' + '%2F..%2F..%2F..%2Fetc', root, path)).toBeNull();
  });
  it('serve scripts with a script content type', () => {
    expect(mimeType('/x/a.js')).toMatch(/javascript/);
    expect(mimeType('/x/index.html')).toMatch(/text\/html/);
    expect(mimeType('/x/unknown.bin')).toBe('application/octet-stream');
  });
});
