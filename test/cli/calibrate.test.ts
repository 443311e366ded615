import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';

// The demo market is used as input only (what the command prints), never as a numeric oracle.
const DEMO = path.resolve(__dirname, '../../samples/market/demo-market.json');
const SERIES = ['2026-11-23', '2026-11-24'].map((d) =>
  path.resolve(__dirname, `../../samples/market/series/${d}.json`),
);

describe('calibrate command', () => {
  it('prints Hull–White, Heston and ladder tables with the validation caution', async () => {
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--equity', 'ALDR', '--factors', 'vol,dom'], io)).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/Hull–White DOM: a = /);
    expect(text).toMatch(/Heston ALDR/);
    expect(text).toMatch(/Feller ratio/);
    expect(text).toMatch(/heston\+hw:dom\s+ALDR:h1-hw\s+approximate/);
    expect(text).toMatch(/independent validation/);
  });

  it('prints JSON with every variant when asked', async () => {
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--equity', 'BRIX', '--factors', 'vol', '--json'], io)).toBe(0);
    const j = JSON.parse(io.outLines.join('\n'));
    expect(j.format).toBe('factor-triage/calibration@1');
    expect(j.ladder.variants.map((v: { id: string }) => v.id)).toEqual(['bs', 'heston']);
    expect(j.note).toMatch(/independent validation/);
  });

  it('adds a stability table for a series of files', async () => {
    const io = captureIo();
    expect(await main(['calibrate', ...SERIES, '--equity', 'ALDR', '--factors', 'vol,dom'], io)).toBe(0);
    expect(io.outLines.join('\n')).toMatch(/Parameter stability over 2 dates/);
  });

  it('exits 2 naming the problem for a missing file, an unknown option or an unknown equity', async () => {
    let io = captureIo();
    expect(await main(['calibrate', '/no/such/market.json'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(/no such file/);
    io = captureIo();
    expect(await main(['calibrate', DEMO, '--fast'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(/unknown option --fast/);
    io = captureIo();
    expect(await main(['calibrate', DEMO, '--equity', 'NOPE'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(/--equity NOPE is not in/);
  });

  it('exits 2 naming the field when a rate-vol block lacks its quote type', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'ft-cal-'));
    const m = JSON.parse(readFileSync(DEMO, 'utf8'));
    delete m.rateVols.DOM.type;
    const file = path.join(dir, 'no-type.json');
    writeFileSync(file, JSON.stringify(m));
    const io = captureIo();
    expect(await main(['calibrate', file, '--equity', 'ALDR', '--factors', 'dom'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(/rateVols\.DOM\.type/);
  });
});
