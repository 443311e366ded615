import { describe, it, expect } from 'vitest';
import { createRequire } from 'node:module';
import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { BRIDGE_CHANNELS, MENU_CHANNEL } from '../../src/ui/platform/desktopBridge.ts';

const require = createRequire(import.meta.url);
const root = path.resolve(__dirname, '../..');

/** Loads app/preload.cjs with a recording stand-in for the 'electron' module (the binary is not installed here). */
function loadPreload() {
  const exposed: Record<string, any> = {};
  const invoked: { channel: string; arg: unknown }[] = [];
  const listeners = new Map<string, Function[]>();
  const fake = {
    contextBridge: { exposeInMainWorld: (key: string, api: unknown) => (exposed[key] = api) },
    ipcRenderer: {
      invoke: async (channel: string, arg: unknown) => {
        invoked.push({ channel, arg });
        return { ok: true, value: null };
      },
      on: (ch: string, h: Function) => listeners.set(ch, [...(listeners.get(ch) ?? []), h]),
      removeListener: (ch: string, h: Function) =>
        listeners.set(
          ch,
          (listeners.get(ch) ?? []).filter((x) => x !== h),
        ),
    },
  };
  const electronId = require.resolve('electron');
  const preloadId = require.resolve('../../app/preload.cjs');
  const saved = require.cache[electronId];
  require.cache[electronId] = { id: electronId, filename: electronId, loaded: true, exports: fake } as any;
  delete require.cache[preloadId];
  try {
    const mod = require('../../app/preload.cjs');
    return { exposed, invoked, listeners, mod };
  } finally {
    if (saved) require.cache[electronId] = saved;
    else delete require.cache[electronId];
  }
}

describe('preload bridge', () => {
  it('exposes exactly one object, window.factorTriage, with the bridge methods', () => {
    const { exposed } = loadPreload();
    expect(Object.keys(exposed)).toEqual(['factorTriage']);
    expect(Object.keys(exposed.factorTriage).sort()).toEqual(
      [...Object.keys(BRIDGE_CHANNELS), 'onMenuCommand'].sort(),
    );
  });
  it('uses the shared channel names', () => {
    const { mod } = loadPreload();
    expect(mod.CH).toEqual(BRIDGE_CHANNELS);
    expect(mod.MENU).toBe(MENU_CHANNEL);
  });
  it('forwards only the documented fields of each request', async () => {
    const { exposed, invoked } = loadPreload();
    await exposed.factorTriage.save({ path: '/a.study.json', text: 't', extra: 'dropped' });
    await exposed.factorTriage.openFile({ kind: 'study', path: '/etc/passwd' });
    expect(invoked).toEqual([
      { channel: BRIDGE_CHANNELS.save, arg: { path: '/a.study.json', text: 't' } },
      { channel: BRIDGE_CHANNELS.openFile, arg: { kind: 'study' } },
    ]);
  });
  it('passes on only known menu commands and can unsubscribe', () => {
    const { exposed, listeners } = loadPreload();
    const got: string[] = [];
    const off = exposed.factorTriage.onMenuCommand((c: string) => got.push(c));
    const h = listeners.get(MENU_CHANNEL)![0]!;
    h({}, 'save');
    h({}, 'rm -rf');
    expect(got).toEqual(['save']);
    off();
    expect(listeners.get(MENU_CHANNEL)).toEqual([]);
  });
  it('satisfies the shared DesktopBridge type, and the main process type-checks against the Electron API', () => {
    const tsc = path.join(root, 'node_modules', '.bin', 'tsc');
    const r = spawnSync(tsc, ['-p', path.join(root, 'app', 'tsconfig.json')], { encoding: 'utf8' });
    expect(r.stdout + r.stderr).toBe('');
    expect(r.status).toBe(0);
  });
});
