/** Number formatting for screens: significant digits, percentages, basis points; never "NaN" for people. */

/** A number with `sig` significant digits (plain notation between 1e-4 and 1e9); '—' for missing values. */
export function num(x: number | null | undefined, sig = 5): string {
  if (x === null || x === undefined || Number.isNaN(x)) return '—';
  if (!Number.isFinite(x)) return x > 0 ? '∞' : '−∞';
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e9 || a < 1e-4) return x.toExponential(Math.max(0, sig - 1)).replace('-', '−');
  const s = Number(x.toPrecision(sig)).toString();
  return s.startsWith('-') ? '−' + s.slice(1) : s;
}

/** A decimal as a percentage, e.g. 0.0235 → "2.35%". */
export function pct(x: number | null | undefined, decimals = 2): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return `${(x * 100).toFixed(decimals).replace('-', '−')}%`;
}

/** A decimal as basis points, e.g. 0.0001 → "1.0 bp". */
export function bp(x: number | null | undefined, decimals = 1): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  return `${(x * 1e4).toFixed(decimals).replace('-', '−')} bp`;
}

/** Seconds, readable. */
export function secs(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  if (x < 1) return `${Math.round(x * 1000)} ms`;
  if (x < 120) return `${x.toFixed(1)} s`;
  return `${Math.floor(x / 60)} min ${Math.round(x % 60)} s`;
}

/** Parses a number typed by a person: accepts `1,000.5`, `2.5%` (→ 0.025), `25bp` (→ 0.0025), a leading `+`. */
export function parseNumber(text: string): number | null {
  let s = text.trim().replace(/[\s_]/g, '').replace(/,/g, '').replace('−', '-');
  if (s === '') return null;
  let scale = 1;
  if (/%$/.test(s)) {
    scale = 0.01;
    s = s.slice(0, -1);
  } else if (/bps?$/i.test(s)) {
    scale = 1e-4;
    s = s.replace(/bps?$/i, '');
  }
  if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(s)) return null;
  const v = Number(s) * scale;
  return Number.isFinite(v) ? v : null;
}
