import { describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'ft-deal-'));
const write = (name: string, value: unknown) => {
  const f = path.join(dir, name);
  writeFileSync(f, typeof value === 'string' ? value : JSON.stringify(value));
  return f;
};

describe('factor-triage deal', () => {
  it('check prints the analysis of a template and the validation caution, exit 0', async () => {
    const io = captureIo();
    expect(await main(['deal', 'check', 'samples/deals/long-dated-floating-note.json'], io)).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/linear at natural dates/);
    expect(text).toMatch(/funding spread\s+110 bp/);
    expect(text).toMatch(/independent validation/);
  });

  it('check of a deal under way lists what the past paid, what did not fire and the state carried on', async () => {
    // Argued from the sample's terms (samples/deals/README.md): coupons of 2.1 % on 1,000,000 paid on the first
    // three dates, the fourth missed (memory counter 1).
    const io = captureIo();
    expect(await main(['deal', 'check', 'samples/deals/autocallable-memory-seasoned.json'], io)).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/under way: valued on 2026-11-23/);
    for (const d of ['2026-02-10', '2026-05-10', '2026-08-10'])
      expect(text).toContain(`${d}  coupon  0.0210000 per unit = 21000.00 DOM`);
    expect(text).toMatch(/did not fire: .*coupon 2026-11-10, autocall 2026-11-10/);
    expect(text).toMatch(/state after the past: missed = 1/);
    const jio = captureIo();
    expect(
      await main(['deal', 'check', 'samples/deals/autocallable-memory-seasoned.json', '--json'], jio),
    ).toBe(0);
    const out = JSON.parse(jio.outLines.join('\n')) as { history?: { payments: unknown[] } }[];
    expect(out[0]!.history!.payments).toHaveLength(3);
  });

  it('check shows an expression error with its field, character and a caret, exit 2', async () => {
    const f = write('bad.json', {
      format: 'factor-triage/deal@1',
      name: 'bad',
      notional: 1,
      currency: 'DOM',
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM' } },
      schedules: { s: { dates: [1] } },
      events: [{ on: 's', pay: { amount: 'max(ALDR - strike, 0)' } }],
    });
    const io = captureIo();
    expect(await main(['deal', 'check', f], io)).toBe(2);
    const err = io.errLines.join('\n');
    expect(err).toMatch(/deal\.events\[0\]\.pay\.amount, character 12: unknown name strike/);
    expect(io.errLines).toContain('    max(ALDR - strike, 0)');
    expect(io.errLines).toContain(`    ${' '.repeat(11)}^^^^^^`);
  });

  it('check --json returns the analysis as data', async () => {
    const io = captureIo();
    expect(await main(['deal', 'check', 'samples/deals/worst-of-quanto.json', '--json'], io)).toBe(0);
    const out = JSON.parse(io.outLines.join('\n')) as {
      ok: boolean;
      analysis: { quanto: { present: boolean } };
    }[];
    expect(out[0]!.ok).toBe(true);
    expect(out[0]!.analysis.quanto.present).toBe(true);
  });

  it('unreadable JSON names the file and the fix, exit 2', async () => {
    const io = captureIo();
    expect(await main(['deal', 'check', write('broken.json', '{"format": ')], io)).toBe(2);
    expect(io.errLines[0]).toMatch(/broken\.json: not valid JSON .*fix the file/);
  });

  it('an unknown subcommand is a usage error', async () => {
    const io = captureIo();
    expect(await main(['deal', 'frob'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(/use check or price/);
  });

  it('price calibrates the base model on the demo market and prints value ± SE with the caution', async () => {
    const io = captureIo();
    const code = await main(
      [
        'deal',
        'price',
        'samples/deals/european-call.json',
        'samples/market/demo-market.json',
        '--paths',
        '4096',
      ],
      io,
    );
    expect(code, io.errLines.join('\n')).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/demo-market.json \(2026-11-23\): value in DOM \(notional 1000000\), 4096 paths/);
    expect(text).toMatch(/\d+\.\d\d ± \d+\.\d\d/);
    expect(text).toMatch(/independent validation/);
  });
});
