#!/usr/bin/env node
// Starts the desktop shell when the Electron binary is installed; otherwise says so in one line and
// points to the browser build. It never downloads anything itself.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, '..');

/** Path of the installed Electron executable, or null when the binary has not been fetched. */
export function findElectronBinary(electronDir) {
  const pathFile = path.join(electronDir, 'path.txt');
  if (process.env.ELECTRON_OVERRIDE_DIST_PATH) {
    const name = existsSync(pathFile) ? readFileSync(pathFile, 'utf8').trim() : 'electron';
    const p = path.join(process.env.ELECTRON_OVERRIDE_DIST_PATH, name);
    return existsSync(p) ? p : null;
  }
  if (!existsSync(pathFile)) return null;
  const p = path.join(electronDir, 'dist', readFileSync(pathFile, 'utf8').trim());
  return existsSync(p) ? p : null;
}

function electronDir() {
  try {
    const require = createRequire(import.meta.url);
    return path.dirname(require.resolve('electron/package.json'));
  } catch {
    return null;
  }
}

const isMain = process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (isMain) {
  const dir = electronDir();
  const bin = dir ? findElectronBinary(dir) : null;
  if (!bin) {
    console.log(
      'Factor Triage: the Electron binary is not available on this machine; run `npm run web` to use the browser build instead.',
    );
    process.exit(1);
  }
  // The shell serves the desktop build of the renderer; build it once if it is not there yet.
  if (!existsSync(path.join(root, 'dist', 'desktop', 'index.html'))) {
    const vite = path.join(root, 'node_modules', 'vite', 'bin', 'vite.js');
    const b = spawnSync(
      process.execPath,
      [vite, 'build', '--config', 'vite.config.ts', '--mode', 'desktop'],
      {
        cwd: root,
        stdio: 'inherit',
      },
    );
    if (b.status !== 0) {
      console.log(
        'Factor Triage: the desktop renderer did not build; run `npx vite build --mode desktop` to see why.',
      );
      process.exit(1);
    }
  }
  const child = spawn(bin, [root, ...process.argv.slice(2)], { stdio: 'inherit' });
  child.on('exit', (code) => process.exit(code ?? 0));
}
