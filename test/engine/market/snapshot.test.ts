import { describe, it, expect } from 'vitest';
import {
  dottedPath,
  parseSnapshot,
  parseSnapshotText,
  snapshotCurves,
  snapshotVolSurfaces,
} from '../../../src/engine/market/snapshot.ts';
import { EngineError } from '../../../src/engine/errors.ts';

/** A small invented snapshot in the fictional DOM/ASH scenario, built here (shape only, not an oracle). */
function sample(): Record<string, any> {
  return {
    schema: 'factor-triage/market@1',
    date: '2026-11-23',
    domestic: 'DOM',
    curves: {
      DOM: { currency: 'DOM', times: [0.5, 1, 2, 5], zeroRates: [0.025, 0.026, 0.027, 0.03] },
      ASH: { currency: 'ASH', times: [1, 5], discountFactors: [0.987, 0.92] },
    },
    equities: {
      ALDR: {
        currency: 'DOM',
        spot: 4200,
        divYield: 0.018,
        dividends: [{ t: 0.4, amount: 20 }],
        vols: {
          expiries: [0.5, 1, 2],
          moneyness: [0.9, 1, 1.1],
          vols: [
            [0.22, 0.2, 0.19],
            [0.215, 0.2, 0.19],
            [0.21, 0.2, 0.192],
          ],
        },
      },
    },
    rateVols: {
      DOM: { instrument: 'caplet', type: 'normal', quotes: [{ expiry: 1, tenor: 1, vol: 0.0084 }] },
    },
    fx: { 'ASH/DOM': { foreign: 'ASH', domestic: 'DOM', spot: 1.37, vol: 0.09 } },
    correlation: {
      names: ['eq:ALDR', 'var:ALDR', 'rate:DOM', 'fx:ASH/DOM'],
      matrix: [
        [1, -0.7, 0.15, -0.1],
        [-0.7, 1, 0, 0.05],
        [0.15, 0, 1, 0.1],
        [-0.1, 0.05, 0.1, 1],
      ],
    },
    correlationRanges: { 'eq:ALDR|rate:DOM': [-0.4, 0.4] },
  };
}

function issuesOf(json: unknown): EngineError {
  try {
    parseSnapshot(json);
  } catch (e) {
    if (e instanceof EngineError) return e;
    throw e;
  }
  throw new Error('expected an EngineError');
}

describe('parseSnapshot', () => {
  it('reads a valid snapshot without warnings and builds its curves and surfaces', () => {
    const { snapshot, warnings } = parseSnapshot(sample());
    expect(warnings).toEqual([]);
    const curves = snapshotCurves(snapshot);
    expect(Object.keys(curves)).toEqual(['DOM', 'ASH']);
    expect(Math.abs(curves.ASH!.df(5) - 0.92)).toBeLessThan(1e-15);
    const s = snapshotVolSurfaces(snapshot).ALDR!;
    expect(Math.abs(s.vol(1, 4200) - 0.2)).toBeLessThan(1e-15);
  });

  it('turns schema errors into issues with dotted paths (curves.DOM.zeroRates[2])', () => {
    const j = sample();
    j.curves.DOM.zeroRates[2] = 'x';
    j.equities.ALDR.spot = null; // what JSON makes of NaN
    const e = issuesOf(j);
    const fields = e.issues.map((i) => i.field);
    expect(fields).toContain('curves.DOM.zeroRates[2]');
    expect(fields).toContain('equities.ALDR.spot');
    expect(e.issues.every((i) => i.severity === 'error')).toBe(true);
    expect(issuesOf({ ...sample(), schema: 'other' }).message).toContain('factor-triage/market@1');
  });

  it('lists every semantic error at once: pillar order, negative vol, missing quote type, non-PSD correlation', () => {
    const j = sample();
    j.curves.DOM.times[2] = 0.9;
    j.equities.ALDR.vols.vols[1][2] = -0.19;
    delete j.rateVols.DOM.type;
    j.correlation.matrix[0][1] = j.correlation.matrix[1][0] = 0.99;
    j.correlation.matrix[1][2] = j.correlation.matrix[2][1] = 0.9;
    j.correlation.matrix[0][2] = j.correlation.matrix[2][0] = -0.9;
    const e = issuesOf(j);
    const fields = e.issues.map((i) => i.field);
    expect(fields).toEqual(
      expect.arrayContaining([
        'curves.DOM.times[2]',
        'equities.ALDR.vols.vols[1][2]',
        'rateVols.DOM.type',
        'correlation.matrix',
      ]),
    );
    expect(e.message).toContain('curves.DOM.times[2]');
    expect(e.message).toMatch(/and \d+ more/);
    const psd = e.issues.find((i) => i.code === 'E_NOT_PSD')!;
    expect((psd.value as { nearest: number[][] }).nearest.length).toBe(4);
  });

  it('checks cross references: curve keys, equity currencies, FX currencies and driver names', () => {
    const j = sample();
    j.curves.ASH.currency = 'DOM';
    j.equities.ALDR.currency = 'ZED';
    j.fx['ASH/DOM'].foreign = 'ZED';
    j.correlation.names[3] = 'fx:XYZ';
    j.correlation.names[2] = 'short:DOM';
    const fields = issuesOf(j).issues.map((i) => `${i.severity}:${i.field}`);
    expect(fields).toEqual(
      expect.arrayContaining([
        'error:curves.ASH.currency',
        'error:equities.ALDR.currency',
        'error:fx.ASH/DOM.foreign',
        'warning:correlation.names[3]',
        'error:correlation.names[2]',
      ]),
    );
  });

  it('returns warnings for unknown fields and vol-grid arbitrage but still reads the snapshot', () => {
    const j = sample();
    j.notes = 'desk comment';
    j.equities.ALDR.vols.vols[2] = [0.12, 0.12, 0.12]; // total variance at T = 2 below T = 1: calendar arbitrage
    const { warnings } = parseSnapshot(j);
    const codes = warnings.map((w) => `${w.code}:${w.field}`);
    expect(codes).toContain('W_UNKNOWN_FIELD:notes');
    expect(codes).toContain('W_CALENDAR_ARBITRAGE:equities.ALDR.vols.vols[2][1]');
  });

  it('rejects bad dates and correlation ranges', () => {
    const j = sample();
    j.date = '2026-02-30';
    j.correlationRanges['eq:ALDR|rate:DOM'] = [0.5, -0.5];
    const fields = issuesOf(j).issues.map((i) => i.field);
    expect(fields).toEqual(expect.arrayContaining(['date', 'correlationRanges.eq:ALDR|rate:DOM']));
  });
});

describe('dottedPath', () => {
  it('writes keys with dots and indices in brackets', () => {
    expect(dottedPath(['curves', 'DOM', 'zeroRates', 2])).toBe('curves.DOM.zeroRates[2]');
    expect(dottedPath(['equities', 'ALDR', 'vols', 'vols', 2, 3])).toBe('equities.ALDR.vols.vols[2][3]');
    expect(dottedPath([])).toBe('(root)');
  });
});

describe('parseSnapshotText', () => {
  it('reads JSON text and reports a syntax error with its line and column', () => {
    const text = JSON.stringify(sample(), null, 2);
    expect(parseSnapshotText(text).warnings).toEqual([]);
    const broken = text.replace('"domestic": "DOM",', '"domestic": "DOM"');
    try {
      parseSnapshotText(broken, 'samples/market/x.json');
      expect.fail('should have thrown');
    } catch (e) {
      const err = e as EngineError;
      expect(err.code).toBe('E_JSON');
      expect(err.issues[0]!.field).toBe('samples/market/x.json');
      expect(err.message).toMatch(/must be valid JSON at line 5, column \d+/);
    }
  });

  it('rejects input that is not an object with a root-level issue', () => {
    const e = (() => {
      try {
        parseSnapshot(null);
      } catch (x) {
        return x as EngineError;
      }
      throw new Error('expected an EngineError');
    })();
    expect(e.issues[0]!.field).toBe('(root)');
  });
});
