/**
 * Writes the invented demo market (fictional currencies DOM and ASH, fictional indices ALDR, BRIX, KESO) and a
 * five-day series of snapshots. Smiles come from Heston parameters chosen here (so the grids are free of static
 * arbitrage by construction), caplet vols from Hull–White parameters chosen here; both are rounded like quotes.
 * Demo data only: never a test oracle. Run: `node bin/run-ts.mjs samples/market/generate.ts`.
 */
import { writeFileSync, renameSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import seedrandom from 'seedrandom';
import type { MarketSnapshot, CurveSpec, EquityQuote, RateVolSpec } from '../../src/engine/market/types.ts';
import type { HestonParams, HullWhiteParams } from '../../src/engine/simulation/types.ts';
import { cosCallPrices } from '../../src/engine/calibration/cosPricer.ts';
import { hestonLogChf } from '../../src/engine/calibration/hestonCharFn.ts';
import { blackImpliedVol, bachelierImpliedVol } from '../../src/engine/calibration/blackFormulas.ts';
import { makeCurve, equityForward } from '../../src/engine/market/index.ts';
import type { DiscountCurve } from '../../src/engine/market/index.ts';
import { makeHullWhite } from '../../src/engine/models/index.ts';

const here = path.dirname(fileURLToPath(import.meta.url));
const PILLARS = [0.25, 0.5, 1, 2, 3, 5, 7, 10, 15, 20, 30];
const EXPIRIES = [0.25, 0.5, 1, 2, 3, 5, 7, 10];
const MONEYNESS = [0.7, 0.8, 0.9, 0.95, 1, 1.05, 1.1, 1.2, 1.3];
const CAPLET_EXPIRIES = [1, 2, 3, 4, 5, 7, 10, 12, 15, 20];

interface EquityState {
  ccy: string;
  spot: number;
  q: number;
  heston: HestonParams;
}
interface DayState {
  domLevel: number;
  ashLevel: number;
  eq: Record<string, EquityState>;
  fxSpot: number;
  fxVol: number;
  hwDom: HullWhiteParams;
  hwAsh: HullWhiteParams;
}

const round = (x: number, step: number) => Math.round(x / step) * step;
const r6 = (x: number) => Number(x.toFixed(6));

function curve(ccy: string, long: number, slope: number, decay: number): CurveSpec {
  return {
    currency: ccy,
    times: PILLARS,
    zeroRates: PILLARS.map((t) => r6(long - slope * Math.exp(-t / decay))),
  };
}

function equityQuote(e: EquityState, curve: DiscountCurve): EquityQuote {
  const df = (t: number) => curve.df(t);
  const vols = EXPIRIES.map((T) => {
    const F = equityForward({ spot: e.spot, divYield: e.q }, curve, T);
    const strikes = MONEYNESS.map((m) => m * e.spot);
    const prices = cosCallPrices({
      logChf: hestonLogChf(e.heston, T),
      forward: F,
      df: df(T),
      strikes,
      terms: 1024,
      width: 20,
    });
    return strikes.map((K, j) => {
      const iv = blackImpliedVol({
        forward: F,
        strike: K,
        expiry: T,
        df: df(T),
        isCall: true,
        price: prices[j]!,
      });
      return Number((round(iv * 100, 0.01) / 100).toFixed(4));
    });
  });
  return {
    currency: e.ccy,
    spot: Number(e.spot.toFixed(2)),
    divYield: e.q,
    vols: { expiries: EXPIRIES, moneyness: MONEYNESS, vols },
  };
}

function capletVols(hw: HullWhiteParams, curve: DiscountCurve): RateVolSpec {
  const tau = 1;
  const df = (t: number) => curve.df(t);
  const model = makeHullWhite(curve, hw);
  return {
    instrument: 'caplet',
    type: 'normal',
    frequency: 1,
    quotes: CAPLET_EXPIRIES.map((T) => {
      const dfT = df(T);
      const dfS = df(T + tau);
      const F = (dfT / dfS - 1) / tau;
      const price = model.caplet({ type: 'cap', T1: T, T2: T + tau, strike: F, accrual: tau });
      const vn = bachelierImpliedVol({
        forward: F,
        strike: F,
        expiry: T,
        df: tau * dfS,
        isCall: true,
        price,
      });
      // Normal vols quoted to 0.1 bp.
      return { expiry: T, tenor: tau, vol: Number(round(vn, 0.00001).toFixed(5)) };
    }),
  };
}

function snapshot(date: string, s: DayState): MarketSnapshot {
  const dom = curve('DOM', 0.035 + s.domLevel, 0.01, 8);
  const ash = curve('ASH', 0.022 + s.ashLevel, 0.01, 6);
  const dfDom = makeCurve(dom);
  const dfAsh = makeCurve(ash);
  const eqs = s.eq;
  const names = [
    'eq:ALDR',
    'eq:BRIX',
    'eq:KESO',
    'var:ALDR',
    'var:BRIX',
    'var:KESO',
    'rate:DOM',
    'rate:ASH',
    'fx:ASH/DOM',
  ];
  const rA = eqs.ALDR!.heston.rho;
  const rB = eqs.BRIX!.heston.rho;
  const rK = eqs.KESO!.heston.rho;
  // Rows follow `names`. Spot–variance correlations equal the Heston ρ of each index; variance–rate pairs are 0.
  const matrix = [
    [1, 0.62, 0.45, rA, -0.4, -0.3, 0.15, 0.05, -0.1],
    [0.62, 1, 0.38, -0.4, rB, -0.25, 0.12, 0.04, -0.08],
    [0.45, 0.38, 1, -0.3, -0.25, rK, 0.05, 0.1, -0.2],
    [rA, -0.4, -0.3, 1, 0.55, 0.4, 0, 0, 0.05],
    [-0.4, rB, -0.25, 0.55, 1, 0.35, 0, 0, 0.04],
    [-0.3, -0.25, rK, 0.4, 0.35, 1, 0, 0, 0.1],
    [0.15, 0.12, 0.05, 0, 0, 0, 1, 0.55, 0.1],
    [0.05, 0.04, 0.1, 0, 0, 0, 0.55, 1, -0.05],
    [-0.1, -0.08, -0.2, 0.05, 0.04, 0.1, 0.1, -0.05, 1],
  ].map((row) => row.map((x) => Number(x.toFixed(4))));
  choleskyOrThrow(matrix);
  return {
    schema: 'factor-triage/market@1',
    date,
    name: `Demo market (invented scenario), ${date}`,
    domestic: 'DOM',
    curves: { DOM: dom, ASH: ash },
    equities: {
      ALDR: equityQuote(eqs.ALDR!, dfDom),
      BRIX: equityQuote(eqs.BRIX!, dfDom),
      KESO: equityQuote(eqs.KESO!, dfAsh),
    },
    rateVols: { DOM: capletVols(s.hwDom, dfDom), ASH: capletVols(s.hwAsh, dfAsh) },
    fx: {
      'ASH/DOM': {
        foreign: 'ASH',
        domestic: 'DOM',
        spot: Number(s.fxSpot.toFixed(5)),
        vol: Number(s.fxVol.toFixed(4)),
      },
    },
    correlation: { names, matrix },
    correlationRanges: {
      'eq:ALDR|rate:DOM': [-0.4, 0.4],
      'eq:BRIX|rate:DOM': [-0.4, 0.4],
      'eq:KESO|rate:ASH': [-0.4, 0.4],
      'eq:KESO|rate:DOM': [-0.3, 0.3],
      'eq:ALDR|fx:ASH/DOM': [-0.5, 0.3],
      'eq:BRIX|fx:ASH/DOM': [-0.5, 0.3],
      'eq:KESO|fx:ASH/DOM': [-0.6, 0.3],
      'var:ALDR|rate:DOM': [-0.3, 0.3],
      'var:BRIX|rate:DOM': [-0.3, 0.3],
      'var:KESO|rate:ASH': [-0.3, 0.3],
      'rate:DOM|fx:ASH/DOM': [-0.3, 0.4],
      'rate:ASH|fx:ASH/DOM': [-0.4, 0.3],
    },
  };
}

function choleskyOrThrow(m: number[][]): void {
  const n = m.length;
  const L = m.map(() => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++)
    for (let j = 0; j <= i; j++) {
      let s = m[i]![j]!;
      for (let k = 0; k < j; k++) s -= L[i]![k]! * L[j]![k]!;
      if (i === j) {
        if (!(s > 1e-10)) throw new Error(`demo correlation matrix is not positive definite at row ${i}`);
        L[i]![i] = Math.sqrt(s);
      } else L[i]![j] = s / L[j]![j]!;
    }
}

function writeAtomic(file: string, data: unknown): void {
  const tmp = `${file}.tmp-${process.pid}`;
  writeFileSync(tmp, JSON.stringify(data, null, 2) + '\n');
  renameSync(tmp, file);
}

const start: DayState = {
  domLevel: 0,
  ashLevel: 0,
  fxSpot: 1.37,
  fxVol: 0.09,
  hwDom: { a: 0.04, sigma: 0.0085 },
  hwAsh: { a: 0.03, sigma: 0.007 },
  eq: {
    ALDR: {
      ccy: 'DOM',
      spot: 4200,
      q: 0.018,
      heston: { v0: 0.032, kappa: 1.6, theta: 0.045, sigma: 0.55, rho: -0.68 },
    },
    BRIX: {
      ccy: 'DOM',
      spot: 980,
      q: 0.025,
      heston: { v0: 0.05, kappa: 2.1, theta: 0.055, sigma: 0.7, rho: -0.55 },
    },
    KESO: {
      ccy: 'ASH',
      spot: 2350,
      q: 0.02,
      heston: { v0: 0.028, kappa: 1.2, theta: 0.04, sigma: 0.45, rho: -0.72 },
    },
  },
};

const DATES = ['2026-11-23', '2026-11-24', '2026-11-25', '2026-11-26', '2026-11-27'];
const rng = seedrandom('demo-market-series-2026-11');
const gauss = () => {
  const u = Math.max(rng(), 1e-12);
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rng());
};
mkdirSync(path.join(here, 'series'), { recursive: true });
let s: DayState = structuredClone(start);
for (let d = 0; d < DATES.length; d++) {
  if (d > 0) {
    const next = structuredClone(s);
    const common = gauss();
    for (const name of Object.keys(next.eq)) {
      const e = next.eq[name]!;
      const ret = 0.011 * (0.7 * common + 0.7 * gauss());
      e.spot *= Math.exp(ret);
      // Variance moves against spot (leverage), a little noise of its own.
      e.heston.v0 = r6(e.heston.v0 * Math.exp(-5 * ret + 0.02 * gauss()));
      e.heston.theta = r6(e.heston.theta * Math.exp(0.005 * gauss()));
    }
    next.domLevel = r6(next.domLevel + 0.0002 * gauss());
    next.ashLevel = r6(next.ashLevel + 0.0002 * gauss());
    next.fxSpot *= Math.exp(0.005 * gauss());
    next.fxVol = next.fxVol * Math.exp(0.02 * gauss());
    next.hwDom.sigma = r6((next.hwDom.sigma as number) * Math.exp(0.01 * gauss()));
    s = next;
  }
  const snap = snapshot(DATES[d]!, s);
  writeAtomic(path.join(here, 'series', `${DATES[d]}.json`), snap);
  if (d === 0) writeAtomic(path.join(here, 'demo-market.json'), snap);
  console.log(`wrote ${DATES[d]}`);
}
