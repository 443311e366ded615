import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';

// The demo market is used as input only (what the command prints), never as a numeric oracle.
const DEMO = path.resolve(__dirname, '../../samples/market/demo-market.json');
const BEST_OF = path.resolve(__dirname, '../../samples/deals/equity-rate-best-of.json');
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
    expect(text).toMatch(/heston\+hw\(DOM\)\s+ALDR:h1-hw\s+approximate/);
    expect(text).toMatch(/Ladder of the snapshot alone: equities ALDR, paid in DOM/);
    expect(text).toMatch(/independent validation/);
  });

  it('prints JSON with every variant when asked', async () => {
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--equity', 'BRIX', '--factors', 'vol', '--json'], io)).toBe(0);
    const j = JSON.parse(io.outLines.join('\n'));
    expect(j.format).toBe('factor-triage/calibration@2');
    expect(j.basis.kind).toBe('snapshot');
    expect(j.candidates).toEqual(['stochVol']);
    expect(j.ladder.variants.map((v: { id: string }) => v.id)).toEqual(['bs', 'heston']);
    expect(j.note).toMatch(/independent validation/);
  });

  it('adds a stability table for a series of files', async () => {
    const io = captureIo();
    expect(await main(['calibrate', ...SERIES, '--equity', 'ALDR', '--factors', 'vol,dom'], io)).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/Parameter stability over 2 dates/);
    expect(text).toMatch(/heston:ALDR\s+v0/);
    expect(text).toMatch(/hull-white:DOM\s+a/);
  });

  it('fits the local-vol diagnostic on request', async () => {
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--equity', 'BRIX', '--factors', 'vol', '--local-vol'], io)).toBe(
      0,
    );
    expect(io.outLines.join('\n')).toMatch(/Local vol BRIX: SVI slices RMSE/);
  });

  it('prints the ladder of a deal: its candidates, required factors and variants', async () => {
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--deal', BEST_OF], io)).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/Ladder of the study of deal/);
    expect(text).toMatch(/required: stochastic domestic short rate/);
    expect(text).toMatch(/bs\+hw\(DOM\)\s+ALDR:bs-hw/);
    expect(text).toMatch(/independent validation/);
  });

  it('exits 2 naming the file for a missing deal file', async () => {
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--deal', '/no/such/deal.json'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(/cannot read the deal file \/no\/such\/deal\.json: no such file/);
  });

  it('exits 2 naming the field and the fix when the deal’s underlying is not in the snapshot', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'ft-cal-'));
    const deal = JSON.parse(readFileSync(BEST_OF, 'utf8'));
    deal.underlyings = { ZEPH: deal.underlyings.ALDR };
    deal.events[0].pay.amount = deal.events[0].pay.amount.replace('ALDR', 'ZEPH');
    const file = path.join(dir, 'zeph.json');
    writeFileSync(file, JSON.stringify(deal));
    const io = captureIo();
    expect(await main(['calibrate', DEMO, '--deal', file], io)).toBe(2);
    const err = io.errLines.join('\n');
    expect(err).toMatch(/deal\.underlyings\.ZEPH/);
    expect(err).toMatch(/must name an equity of the market/);
    expect(err).toMatch(/add it to the market snapshot or correct/);
  });

  it('refuses options the deal decides, and a piecewise Hull–White σ, naming the replacement', async () => {
    for (const [args, msg] of [
      [['--deal', BEST_OF, '--factors', 'vol'], /--factors does not combine with --deal.*--also FACTOR/],
      [['--deal', BEST_OF, '--equity', 'ALDR'], /--equity does not combine with --deal/],
      [['--deal', BEST_OF, '--seed', 's'], /--seed does not combine with --deal.*--settings FILE/],
      [['--also', 'stochVol'], /--also needs --deal/],
      [['--hw', 'piecewise'], /--hw piecewise is not offered.*constant Hull–White σ; drop --hw/],
    ] as const) {
      const io = captureIo();
      expect(await main(['calibrate', DEMO, ...args], io), args.join(' ')).toBe(2);
      expect(io.errLines.join('\n')).toMatch(msg);
    }
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
