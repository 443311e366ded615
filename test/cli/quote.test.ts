import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { captureIo } from '../helpers/captureIo.ts';
import { makeHullWhite } from '../../src/engine/models/index.ts';
import { flatCurve } from '../../src/engine/market/curve.ts';

const dir = mkdtempSync(path.join(tmpdir(), 'ft-quote-'));
function writeJson(name: string, data: unknown): string {
  const p = path.join(dir, name);
  writeFileSync(p, typeof data === 'string' ? data : JSON.stringify(data));
  return p;
}

// A small file whose prices have published values: Hull, OFOD BSM example (call 4.7594, from memory) and the
// Hull, OFOD short-rate problem (ZBC 0.439 on face 100, from memory), both re-computed in published.md.
const small = {
  format: 'factor-triage/quotes@1',
  curves: { DOM: { flat: 0.1 } },
  models: {
    eq: { kind: 'black-scholes', curve: 'DOM', spot: 42, divYield: 0, vol: 0.2 },
    hw: { kind: 'hull-white', curve: 'DOM', a: 0.08, sigma: 0.01 },
  },
  instruments: [
    { id: 'hull-call', kind: 'european', model: 'eq', type: 'call', strike: 40, expiry: 0.5 },
    {
      id: 'hull-zbc',
      kind: 'zero-bond-option',
      model: 'hw',
      type: 'call',
      expiry: 1,
      bondMaturity: 5,
      strike: 0.68,
      notional: 100,
    },
    { kind: 'caplet', model: 'hw', type: 'cap', fixing: 1, payment: 2, strike: 0.1 },
  ],
};

describe('quote command', () => {
  it('prices the instruments in input order as JSON, matching published values', async () => {
    const io = captureIo();
    const code = await main(['quote', writeJson('small.json', small), '--json'], io);
    expect(code).toBe(0);
    const out = JSON.parse(io.outLines.join('\n'));
    expect(out.format).toBe('factor-triage/quote-results@1');
    expect(out.results.map((r: { id: string }) => r.id).slice(0, 2)).toEqual(['hull-call', 'hull-zbc']);
    expect(Math.abs(out.results[0].price - 4.75942239287)).toBeLessThan(1e-10);
    expect(Math.abs(out.results[0].impliedVol - 0.2)).toBeLessThan(1e-12);
    expect(Math.abs(out.results[1].price - 0.438949559957)).toBeLessThan(1e-10);
    const hw = makeHullWhite(flatCurve('DOM', 0.1), { a: 0.08, sigma: 0.01 });
    expect(out.results[2].price).toBeCloseTo(hw.caplet({ type: 'cap', T1: 1, T2: 2, strike: 0.1 }), 14);
    expect(out.results[2].impliedVolKind).toBe('normal');
    expect(out.note).toMatch(/independent validation/);
  });

  it('prints an aligned table with the model-validation caution', async () => {
    const io = captureIo();
    expect(await main(['quote', writeJson('small2.json', small)], io)).toBe(0);
    const lines = io.outLines;
    expect(lines[0]).toMatch(/^ *# +instrument +model +price +implied vol$/);
    const priceCol = lines[0]!.indexOf('price') + 'price'.length;
    // right-aligned prices end in the same column
    for (const l of lines.slice(2, 5)) expect(l.slice(0, priceCol)).toMatch(/\d$/);
    expect(lines.join('\n')).toMatch(/4\.759422/);
    expect(lines.join('\n')).toMatch(/independent validation/);
  });

  it('prices the demo sample: every line has a price and the Black–Scholes line repeats its vol', async () => {
    const io = captureIo();
    expect(await main(['quote', 'samples/quotes-demo.json', '--json'], io)).toBe(0);
    const out = JSON.parse(io.outLines.join('\n'));
    expect(out.results.length).toBe(14);
    for (const r of out.results) expect(Number.isFinite(r.price)).toBe(true);
    // Black–Scholes line: the implied vol of its own price is its vol (round trip; common practice).
    expect(Math.abs(out.results[0].impliedVol - 0.235)).toBeLessThan(1e-12);
    const kinds = new Set(out.results.map((r: { kind: string }) => r.kind));
    expect(kinds).toEqual(new Set(['european', 'zero-bond-option', 'caplet', 'swaption']));
  });

  it('prices a quanto line at Haug (1998) pp. 105-106: 5.3280 with fixed FX 1.5 (from memory; QuantLib test-suite/quantooption.cpp)', async () => {
    const file = {
      format: 'factor-triage/quotes@1',
      curves: { DOM: { flat: 0.08 }, ASH: { flat: 0.05 } },
      models: {
        qx: {
          kind: 'quanto',
          curve: 'DOM',
          foreignCurve: 'ASH',
          spot: 100,
          divYield: 0.04,
          vol: 0.2,
          fxVol: 0.1,
          rho: 0.3,
          fixedFx: 1.5,
        },
      },
      instruments: [{ kind: 'european', model: 'qx', type: 'call', strike: 105, expiry: 0.5 }],
    };
    const io = captureIo();
    expect(await main(['quote', writeJson('quanto.json', file), '--json'], io)).toBe(0);
    const out = JSON.parse(io.outLines.join('\n'));
    expect(Math.abs(out.results[0].price - 5.32803391922)).toBeLessThan(1e-10);
  });

  it('prices a Black–Scholes–Hull–White line with a vol term structure equal to a flat vol when all pieces agree (limit)', async () => {
    const models = {
      flat: { kind: 'bs-hull-white', curve: 'DOM', spot: 100, vol: 0.2, a: 0.05, sigma: 0.01, rho: 0.3 },
      term: {
        kind: 'bs-hull-white',
        curve: 'DOM',
        spot: 100,
        vol: { volTimes: [1, 5], vols: [0.2, 0.2] },
        a: 0.05,
        sigma: 0.01,
        rho: 0.3,
      },
    };
    const instruments = ['flat', 'term'].map((model) => ({
      kind: 'european',
      model,
      type: 'call',
      strike: 100,
      expiry: 7,
    }));
    const io = captureIo();
    const f = { format: 'factor-triage/quotes@1', curves: { DOM: { flat: 0.03 } }, models, instruments };
    expect(await main(['quote', writeJson('term.json', f), '--json'], io)).toBe(0);
    const out = JSON.parse(io.outLines.join('\n'));
    expect(Math.abs(out.results[0].price - out.results[1].price)).toBeLessThan(1e-12);
    const bad = {
      ...f,
      models: { ...models, term: { ...models.term, vol: { volTimes: [1], vols: [0.2, 0.3] } } },
    };
    const io2 = captureIo();
    expect(await main(['quote', writeJson('term-bad.json', bad)], io2)).toBe(2);
    expect(io2.errLines.join('\n')).toMatch(/models\.term\.vol\.volTimes/);
  });

  it('reports a missing file in one line with exit code 2', async () => {
    const io = captureIo();
    expect(await main(['quote', path.join(dir, 'nope.json')], io)).toBe(2);
    expect(io.errLines).toHaveLength(1);
    expect(io.errLines[0]).toMatch(/cannot read .*nope\.json: no such file/);
  });

  it('reports malformed JSON in one line with exit code 2', async () => {
    const io = captureIo();
    expect(await main(['quote', writeJson('bad.json', '{"format": ')], io)).toBe(2);
    expect(io.errLines).toHaveLength(1);
    expect(io.errLines[0]).toMatch(/is not valid JSON/);
  });

  it('names every bad field: negative vol, unknown model, wrong format, unknown key', async () => {
    const bad = structuredClone(small) as Record<string, any>;
    bad.models.eq.vol = -0.2;
    bad.instruments[1].model = 'missing';
    bad.instruments[0].colour = 'red';
    const io = captureIo();
    expect(await main(['quote', writeJson('fields.json', bad)], io)).toBe(2);
    const text = io.errLines.join('\n');
    expect(text).toMatch(/models\.eq\.vol/);
    expect(text).toMatch(/instruments\[0\]/);
    const io2 = captureIo();
    const bad2 = {
      ...small,
      models: { ...small.models },
      instruments: [{ ...small.instruments[1], model: 'missing' }],
    };
    expect(await main(['quote', writeJson('fields2.json', bad2)], io2)).toBe(2);
    expect(io2.errLines.join('\n')).toMatch(/instruments\[0\]\.model: no model "missing"/);
    const io3 = captureIo();
    expect(await main(['quote', writeJson('fmt.json', { ...small, format: 'something/else@9' })], io3)).toBe(
      2,
    );
    expect(io3.errLines.join('\n')).toMatch(/format/);
  });

  it('rejects a european option on a rate model, naming the instrument', async () => {
    const bad = { ...small, instruments: [{ ...small.instruments[0], model: 'hw' }] };
    const io = captureIo();
    expect(await main(['quote', writeJson('kind.json', bad)], io)).toBe(2);
    expect(io.errLines.join('\n')).toMatch(
      /instruments\[0\]\.model: a european option needs an equity model/,
    );
  });

  it('needs exactly one file and rejects unknown options', async () => {
    const io = captureIo();
    expect(await main(['quote'], io)).toBe(2);
    const io2 = captureIo();
    expect(await main(['quote', 'a.json', '--fast'], io2)).toBe(2);
    expect(io2.errLines[0]).toMatch(/unknown option --fast/);
  });
});
