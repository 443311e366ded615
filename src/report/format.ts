/** Text helpers of the report: HTML escaping and number formatting. */

/** Escapes text for HTML content and attribute values. */
export function esc(s: unknown): string {
  return String(s)
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&#39;');
}

/** A number with `sig` significant digits, thousands grouped; '—' for null/undefined/non-finite. */
export function fmt(x: number | null | undefined, sig = 5): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '—';
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (Number.isInteger(x) && a < 1e15) return String(x).replace(/\B(?=(\d{3})+(?!\d))/g, ',');
  if (a >= 1e9 || a < 1e-5) return x.toExponential(Math.max(0, sig - 1));
  const digits = Math.max(0, sig - 1 - Math.floor(Math.log10(a)));
  const s = x.toFixed(Math.min(12, digits));
  const [i, f0] = s.split('.');
  const grouped = i!.replace(/\B(?=(\d{3})+(?!\d))/g, ',');
  // Trailing zeros carry no information once the significant digits are fixed.
  const f = f0?.replace(/0+$/, '');
  return f ? `${grouped}.${f}` : grouped;
}

/** Percentage with a given number of decimals. */
export function pct(x: number, decimals = 2): string {
  return Number.isFinite(x) ? `${(x * 100).toFixed(decimals)}%` : '—';
}
