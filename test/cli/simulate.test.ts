import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';
import { bsPrice } from '../../src/engine/models/blackScholes.ts';

describe('factor-triage simulate', () => {
  it('prints both prices within 3 standard errors of their closed forms, and the paired difference', async () => {
    const io = captureIo();
    expect(await main(['simulate', '--paths', '40000', '--seed', '5', '--json'], io)).toBe(0);
    const r = JSON.parse(io.outLines.join('\n'));
    // Black–Scholes closed form (common practice) cross-checked with the models layer: S=100, K=100, T=5, r=3%, q=1%, vol=20%.
    expect(r.results[0].analytic).toBeCloseTo(
      bsPrice({ type: 'call', S: 100, K: 100, T: 5, r: 0.03, q: 0.01, vol: 0.2 }),
      8,
    );
    for (const row of r.results) {
      expect(Math.abs(row.price - row.analytic), JSON.stringify(row)).toBeLessThanOrEqual(3 * row.stdError);
      expect(row.stdError).toBeLessThan(0.2);
    }
    expect(
      Math.abs(r.difference.price - r.difference.analytic),
      JSON.stringify(r.difference),
    ).toBeLessThanOrEqual(3 * r.difference.stdError);
    // Paired paths: the difference is far better resolved than either price.
    expect(r.difference.stdError).toBeLessThan(r.results[0].stdError / 3);
    expect(r.caution).toMatch(/independent validation/);
    expect(io.fractions[io.fractions.length - 1]).toBe(1);
  });

  it('gives the same numbers with 2 worker threads as in process', async () => {
    const a = captureIo();
    const b = captureIo();
    await main(['simulate', '--paths', '8000', '--json'], a);
    await main(['simulate', '--paths', '8000', '--workers', '2', '--json'], b);
    const ra = JSON.parse(a.outLines.join('\n'));
    const rb = JSON.parse(b.outLines.join('\n'));
    expect(rb.results).toEqual(ra.results);
  });

  it('prints a table with the caution line', async () => {
    const io = captureIo();
    expect(await main(['simulate', '--paths', '2000'], io)).toBe(0);
    const text = io.outLines.join('\n');
    expect(text).toMatch(/Black-Scholes-Hull-White/);
    expect(text).toMatch(/difference \(paired paths\)/);
    expect(text).toMatch(/independent validation/);
  });

  it('rejects a bad option value naming the option and the fix', async () => {
    const io = captureIo();
    expect(await main(['simulate', '--paths', '0'], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(
      /--paths must be a whole number >= 2 \(got "0"\): e\.g\. --paths 100000/,
    );
    const io2 = captureIo();
    expect(await main(['simulate', '--frobnicate'], io2)).toBe(2);
    expect(io2.errLines.join('\n')).toMatch(/--frobnicate is not an option of simulate/);
  });
});
