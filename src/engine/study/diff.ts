/**
 * Comparison of two saved studies: what changed in the inputs (deal, market snapshots), in the settings, and in
 * the results (prices, Δ, verdicts). Plain data out, for the command line, the report and the app.
 */
import type { SavedStudy } from './types.ts';

/** One changed field. `a` / `b` are the values in the first / second study (undefined: absent). */
export interface FieldChange {
  field: string;
  a: unknown;
  b: unknown;
  /** For numbers: b − a. */
  change?: number;
}

export interface StudyDiff {
  /** True when inputs, settings and results are all identical (timings may still differ). */
  identical: boolean;
  sameHash: boolean;
  deal: FieldChange[];
  markets: FieldChange[];
  settings: FieldChange[];
  /** Verdicts that changed, one line each. */
  verdicts: { factor: string; a: string; b: string }[];
  /** Price, Δ and other result changes. */
  results: FieldChange[];
  /** True when a section hit the change cap and was cut. */
  truncated: boolean;
}

const CAP = 200;

function collect(a: unknown, b: unknown, path: string, out: FieldChange[]): void {
  if (out.length > CAP) return;
  if (Object.is(a, b)) return;
  const isObj = (x: unknown) => x !== null && typeof x === 'object';
  if (isObj(a) && isObj(b) && Array.isArray(a) === Array.isArray(b)) {
    if (Array.isArray(a) && Array.isArray(b)) {
      const n = Math.max(a.length, b.length);
      for (let i = 0; i < n; i++) collect(a[i], b[i], `${path}[${i}]`, out);
      return;
    }
    const ao = a as Record<string, unknown>;
    const bo = b as Record<string, unknown>;
    for (const k of Array.from(new Set([...Object.keys(ao), ...Object.keys(bo)])).sort())
      collect(ao[k], bo[k], path ? `${path}.${k}` : k, out);
    return;
  }
  const c: FieldChange = { field: path, a, b };
  if (typeof a === 'number' && typeof b === 'number') c.change = b - a;
  out.push(c);
}

function section(a: unknown, b: unknown, path: string): FieldChange[] {
  const out: FieldChange[] = [];
  collect(a, b, path, out);
  return out;
}

/** Compares two studies section by section. */
export function diffStudies(a: SavedStudy, b: SavedStudy): StudyDiff {
  const deal = section(a.input.deal, b.input.deal, 'deal');
  const markets = section(a.input.markets, b.input.markets, 'markets');
  const settings = section(a.input.settings, b.input.settings, 'settings');
  const verdicts: StudyDiff['verdicts'] = [];
  const factors = Array.from(new Set([...a.verdicts, ...b.verdicts].map((v) => v.factor)));
  for (const f of factors) {
    const va = a.verdicts.find((v) => v.factor === f)?.verdict ?? '(absent)';
    const vb = b.verdicts.find((v) => v.factor === f)?.verdict ?? '(absent)';
    if (va !== vb) verdicts.push({ factor: f, a: va, b: vb });
  }
  const results = [
    ...section(
      a.ladder.map((v) => ({ id: v.id, spec: v.spec, rmseVol: v.calibration.rmseVol })),
      b.ladder.map((v) => ({ id: v.id, spec: v.spec, rmseVol: v.calibration.rmseVol })),
      'ladder',
    ),
    ...section(a.results, b.results, 'results'),
    ...section(
      a.verdicts.map((v) => v.decision),
      b.verdicts.map((v) => v.decision),
      'verdicts',
    ),
  ];
  const truncated = [deal, markets, settings, results].some((s) => s.length > CAP);
  const identical =
    deal.length === 0 &&
    markets.length === 0 &&
    settings.length === 0 &&
    verdicts.length === 0 &&
    results.length === 0;
  return {
    identical,
    sameHash: a.hash === b.hash,
    deal: deal.slice(0, CAP),
    markets: markets.slice(0, CAP),
    settings: settings.slice(0, CAP),
    verdicts,
    results: results.slice(0, CAP),
    truncated,
  };
}
