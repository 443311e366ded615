import { describe, it, expect } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import {
  MAX_RECENT,
  addRecent,
  removeRecent,
  parseRecent,
  serializeRecent,
  loadRecent,
  storeRecent,
  type RecentFile,
} from '../../app/lib/recentFiles.cjs';

const f = (p: string, at: number): RecentFile => ({ path: p, name: path.basename(p), kind: 'study', at });

describe('recent files', () => {
  it('put the newest first and never list a path twice', () => {
    let l: RecentFile[] = [];
    l = addRecent(l, f('/a', 1));
    l = addRecent(l, f('/b', 2));
    l = addRecent(l, f('/a', 3));
    expect(l.map((r) => r.path)).toEqual(['/a', '/b']);
    expect(l[0]!.at).toBe(3);
  });
  it(`keep at most ${MAX_RECENT} entries`, () => {
    let l: RecentFile[] = [];
    for (let i = 0; i < MAX_RECENT + 5; i++) l = addRecent(l, f(`/s${i}`, i));
    expect(l).toHaveLength(MAX_RECENT);
    expect(l[0]!.path).toBe(`/s${MAX_RECENT + 4}`);
  });
  it('remove by path', () => {
    expect(removeRecent([f('/a', 1), f('/b', 2)], '/a').map((r) => r.path)).toEqual(['/b']);
  });
  it('round-trip through the stored form', () => {
    const l = [f('/a', 1), f('/b', 2)];
    expect(parseRecent(serializeRecent(l))).toEqual(l);
  });
  it('ignore a damaged list file and malformed entries instead of failing', () => {
    expect(parseRecent('{not json')).toEqual([]);
    expect(parseRecent('[1,2,3]')).toEqual([]);
    const text = JSON.stringify({
      files: [f('/ok', 1), { path: 5 }, { path: '/x', name: 'x', kind: 'exe', at: 1 }],
    });
    expect(parseRecent(text).map((r) => r.path)).toEqual(['/ok']);
  });
  it('store atomically and load back; a missing file loads as empty', () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ft-recent-'));
    const file = path.join(dir, 'recent-files.json');
    expect(loadRecent(file, fs)).toEqual([]);
    storeRecent(file, [f('/a', 1)]);
    expect(loadRecent(file, fs)).toEqual([f('/a', 1)]);
    fs.rmSync(dir, { recursive: true, force: true });
  });
});
