import { describe, it, expect, afterAll } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { writeFileAtomic } from '../../app/lib/atomicWrite.cjs';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ft-atomic-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

/** A file system whose write stops after `limit` bytes, as if the process died or the disk filled midway. */
function interruptedFs(limit: number): typeof fs {
  let total = 0;
  return {
    ...fs,
    writeSync: ((fd: number, buf: Uint8Array, offset: number, length: number) => {
      const n = Math.min(length, Math.max(0, limit - total));
      if (n === 0)
        throw Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
      const w = fs.writeSync(fd, buf, offset, n);
      total += w;
      return w;
    }) as typeof fs.writeSync,
  };
}

describe('atomic write', () => {
  it('writes the full text and leaves no temporary file behind', () => {
    const p = path.join(dir, 'a.study.json');
    writeFileAtomic(p, '{"v":1}');
    expect(fs.readFileSync(p, 'utf8')).toBe('{"v":1}');
    expect(fs.readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
  it('a write interrupted midway leaves the old file intact and removes the partial temp file', () => {
    const p = path.join(dir, 'b.study.json');
    const old = JSON.stringify({ version: 'old', data: 'x'.repeat(1000) });
    fs.writeFileSync(p, old);
    const next = JSON.stringify({ version: 'new', data: 'y'.repeat(100_000) });
    expect(() => writeFileAtomic(p, next, { fs: interruptedFs(4096) })).toThrow(/ENOSPC/);
    expect(fs.readFileSync(p, 'utf8')).toBe(old);
    expect(fs.readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
  it('a failure at the rename step also leaves the old file intact', () => {
    const p = path.join(dir, 'c.study.json');
    fs.writeFileSync(p, 'old');
    const failingRename = {
      ...fs,
      renameSync: (() => {
        throw new Error('EXDEV: rename failed');
      }) as typeof fs.renameSync,
    };
    expect(() => writeFileAtomic(p, 'new', { fs: failingRename })).toThrow(/EXDEV/);
    expect(fs.readFileSync(p, 'utf8')).toBe('old');
    expect(fs.readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
  it('writes the temporary file in the same folder as the target (so rename is one step)', () => {
    const p = path.join(dir, 'd.study.json');
    const seen: string[] = [];
    const spy = {
      ...fs,
      openSync: ((f: string, flags: string, mode?: number) => {
        seen.push(f);
        return fs.openSync(f, flags, mode);
      }) as typeof fs.openSync,
    };
    writeFileAtomic(p, 'x', { fs: spy });
    expect(seen).toHaveLength(1);
    expect(path.dirname(seen[0]!)).toBe(dir);
    expect(seen[0]).not.toBe(p);
  });
  it('writes bytes unchanged (PDF export)', () => {
    const p = path.join(dir, 'e.pdf');
    const bytes = new Uint8Array([0x25, 0x50, 0x44, 0x46, 0, 255, 128]);
    writeFileAtomic(p, bytes);
    expect([...fs.readFileSync(p)]).toEqual([...bytes]);
  });
});
