/**
 * Sorting a variant's calibration rows for the Fit screen: equity vols by equity and expiry (a smile per
 * maturity), rate vols by currency (a term structure per expiry), and each Monte Carlo reprice joined to the
 * instrument it checks. Plain data in, plain data out; the labels read are the ones the study writes.
 */
import type { FitRow, ValueSe } from '../../engine/study/types.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';

/** What one instrument label says, as far as it says it. */
export interface ParsedLabel {
  asset: 'equity' | 'rate' | 'other';
  /** Equity or currency name (first word of the label). */
  name: string;
  /** Option expiry or caplet fixing, years. */
  expiry: number | null;
  /** Equity strike (price units) or caplet strike (decimal rate). */
  strike: number | null;
  /** Caplet accrual or swap length, years. */
  tenor: number | null;
  rateInstrument: 'caplet' | 'swaption' | null;
  /** The row is a Monte Carlo reprice on the study's paths, not a calibration instrument. */
  monteCarlo: boolean;
}

/** Reads an instrument label (`ALDR K=3896.6 T=3`, `DOM caplet 2y×1y`, `… (Monte Carlo reprice)`). */
export function parseFitLabel(label: string): ParsedLabel {
  const monteCarlo = /\(Monte Carlo reprice\)\s*$/.test(label);
  const name = label.match(/^\s*([A-Za-z][A-Za-z0-9_:-]*)/)?.[1] ?? '';
  const rate = label.match(/\b(caplet|swaption)\s+([\d.]+)y\s*[×x]\s*([\d.]+)y/i);
  if (rate) {
    const k = label.match(/K=([-\d.]+)%/);
    return {
      asset: 'rate',
      name,
      expiry: Number(rate[2]),
      tenor: Number(rate[3]),
      strike: k ? Number(k[1]) / 100 : null,
      rateInstrument: rate[1]!.toLowerCase() as 'caplet' | 'swaption',
      monteCarlo,
    };
  }
  const t = label.match(/\bT=([\d.]+)/);
  const k = label.match(/\bK=([\d.]+)/);
  if (t)
    return {
      asset: 'equity',
      name,
      expiry: Number(t[1]),
      tenor: null,
      strike: k ? Number(k[1]) : null,
      rateInstrument: null,
      monteCarlo,
    };
  return { asset: 'other', name, expiry: null, strike: null, tenor: null, rateInstrument: null, monteCarlo };
}

/** Why an instrument has no Monte Carlo reprice, or what a reprice-only row is. */
export type McNote =
  /** Calibration instrument with its reprice on the study's paths. */
  | 'repriced'
  /** Calibration instrument the study did not reprice (it reprices a few vanillas per equity). */
  | 'notSelected'
  /** The study carries no Monte Carlo reprice for this variant at all. */
  | 'noneInStudy'
  /** Swaptions are fitted in closed form and never repriced on the paths. */
  | 'swaption'
  /** Reprice of a vanilla this variant was not fitted to: a check of how it extrapolates. */
  | 'checkOnly';

/** One row of the Fit screen: an instrument, its fit and (when there is one) its reprice. */
export interface FitLine {
  label: string;
  parsed: ParsedLabel;
  /** Strike over spot (equities with a known spot), else null. */
  moneyness: number | null;
  marketVol: number;
  modelVol: number;
  /** Was this instrument in the variant's calibration set? */
  calibrated: boolean;
  /** Monte Carlo price − market price (currency per unit notional), with its standard error. */
  mc: ValueSe | null;
  note: McNote;
}

export interface ExpiryGroup {
  /** Years. */
  expiry: number;
  lines: FitLine[];
}

export interface EquityFit {
  name: string;
  /** Spot from the pricing snapshot (null when the snapshot does not name the equity). */
  spot: number | null;
  expiries: ExpiryGroup[];
}

export interface RateFit {
  currency: string;
  /** From the pricing snapshot's rate vols: how the quotes (and fitted vols) are expressed. */
  quoteType: 'normal' | 'lognormal' | null;
  lines: FitLine[];
}

export interface GroupedFit {
  equities: EquityFit[];
  rates: RateFit[];
  /** Rows whose label names neither an equity expiry nor a rate instrument. */
  other: FitLine[];
}

const keyOf = (p: ParsedLabel): string =>
  p.asset === 'rate'
    ? `r|${p.name}|${p.rateInstrument}|${p.expiry}|${p.tenor}`
    : `e|${p.name}|${p.expiry}|${p.strike === null ? '' : Math.round(p.strike * 100)}`;

/**
 * Groups a variant's fit rows. A Monte Carlo reprice is joined to the calibration row of the same instrument
 * (same name, expiry and strike to the cent; same caplet); a reprice with no such row becomes its own line
 * (`checkOnly` when the study says the vanilla was not fitted). Every input row appears in exactly one line.
 */
export function groupFit(fit: FitRow[], market: MarketSnapshot | undefined): GroupedFit {
  const anyMc = fit.some((f) => f.mcError !== null);
  const lines: FitLine[] = [];
  const byKey = new Map<string, FitLine>();
  const parsedRows = fit.map((row) => ({ row, p: parseFitLabel(row.instrument) }));
  for (const { row, p } of parsedRows) {
    if (p.monteCarlo) continue;
    const line: FitLine = {
      label: row.instrument,
      parsed: p,
      moneyness: null,
      marketVol: row.marketVol,
      modelVol: row.modelVol,
      calibrated: true,
      mc: row.mcError,
      note: row.mcError
        ? 'repriced'
        : p.rateInstrument === 'swaption'
          ? 'swaption'
          : anyMc
            ? 'notSelected'
            : 'noneInStudy',
    };
    lines.push(line);
    if (p.asset !== 'other' && !byKey.has(keyOf(p))) byKey.set(keyOf(p), line);
  }
  for (const { row, p } of parsedRows) {
    if (!p.monteCarlo) continue;
    const host = byKey.get(keyOf(p));
    if (host && host.mc === null) {
      host.mc = row.mcError;
      host.note = 'repriced';
      continue;
    }
    lines.push({
      label: row.instrument,
      parsed: p,
      moneyness: null,
      marketVol: row.marketVol,
      modelVol: row.modelVol,
      calibrated: row.calibrated !== false,
      mc: row.mcError,
      note: row.calibrated === false ? 'checkOnly' : 'repriced',
    });
  }
  const equities = new Map<string, EquityFit>();
  const rates = new Map<string, RateFit>();
  const other: FitLine[] = [];
  for (const line of lines) {
    const p = line.parsed;
    if (p.asset === 'equity' && p.expiry !== null) {
      let eq = equities.get(p.name);
      if (!eq) {
        const spot = market?.equities[p.name]?.spot;
        eq = { name: p.name, spot: spot !== undefined && spot > 0 ? spot : null, expiries: [] };
        equities.set(p.name, eq);
      }
      if (eq.spot !== null && p.strike !== null) line.moneyness = p.strike / eq.spot;
      let g = eq.expiries.find((x) => x.expiry === p.expiry);
      if (!g) eq.expiries.push((g = { expiry: p.expiry, lines: [] }));
      g.lines.push(line);
    } else if (p.asset === 'rate') {
      let r = rates.get(p.name);
      if (!r)
        rates.set(
          p.name,
          (r = { currency: p.name, quoteType: market?.rateVols?.[p.name]?.type ?? null, lines: [] }),
        );
      r.lines.push(line);
    } else other.push(line);
  }
  const byStrike = (a: FitLine, b: FitLine): number => (a.parsed.strike ?? 0) - (b.parsed.strike ?? 0);
  for (const eq of equities.values()) {
    eq.expiries.sort((a, b) => a.expiry - b.expiry);
    for (const g of eq.expiries) g.lines.sort(byStrike);
  }
  for (const r of rates.values())
    r.lines.sort(
      (a, b) =>
        (a.parsed.expiry ?? 0) - (b.parsed.expiry ?? 0) || (a.calibrated ? 0 : 1) - (b.calibrated ? 0 : 1),
    );
  return { equities: [...equities.values()], rates: [...rates.values()], other };
}

/** Root mean square of model − market vol over the calibration rows proper (NaN when there are none). */
export function rmseOf(lines: FitLine[]): number {
  const c = lines.filter((l) => !l.parsed.monteCarlo);
  if (c.length === 0) return NaN;
  return Math.sqrt(c.reduce((s, l) => s + (l.modelVol - l.marketVol) ** 2, 0) / c.length);
}
