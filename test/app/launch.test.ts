import { describe, it, expect } from 'vitest';
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { findElectronBinary } from '../../app/launch.mjs';

const root = path.resolve(__dirname, '../..');

describe('launcher', () => {
  it('finds no binary in an Electron folder without one', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ft-launch-'));
    expect(findElectronBinary(dir)).toBeNull();
    fs.writeFileSync(path.join(dir, 'path.txt'), 'electron');
    expect(findElectronBinary(dir)).toBeNull();
    fs.mkdirSync(path.join(dir, 'dist'));
    fs.writeFileSync(path.join(dir, 'dist', 'electron'), '');
    expect(findElectronBinary(dir)).toBe(path.join(dir, 'dist', 'electron'));
    fs.rmSync(dir, { recursive: true, force: true });
  });
  it('without the binary prints one line naming `npm run web`, no stack trace, and exits non-zero', () => {
    const electronDir = path.join(root, 'node_modules', 'electron');
    const bin = findElectronBinary(electronDir);
    if (bin !== null) {
      // A machine with Electron installed launches it instead; then the binary must really be there.
      expect(fs.statSync(bin).isFile()).toBe(true);
      return;
    }
    const r = spawnSync(process.execPath, [path.join(root, 'app', 'launch.mjs')], {
      encoding: 'utf8',
      timeout: 20_000,
    });
    const lines = (r.stdout + r.stderr).trim().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/Electron binary is not available on this machine/);
    expect(lines[0]).toContain('npm run web');
    expect(r.stdout + r.stderr).not.toMatch(/\n\s+at /);
    expect(r.status).toBe(1);
  });
});
