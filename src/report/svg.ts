/**
 * Small inline SVG charts for the report (no external assets): a line chart with optional bands and an
 * interval ("whisker") chart with a shaded materiality zone.
 */
import { esc, fmt } from './format.ts';

export interface Series {
  name: string;
  points: { x: number; y: number; lo?: number; hi?: number }[];
  /** CSS colour. */
  colour: string;
  dashed?: boolean;
}

const W = 560;
const H = 220;
const PAD = { l: 64, r: 16, t: 14, b: 34 };

function ticks(lo: number, hi: number, n = 5): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / n;
  const mag = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? raw;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + 1e-12 * Math.abs(hi); v += step) out.push(v);
  return out;
}

/** A line chart; `logX` plots x on a base-2 log axis (path counts). `hBand` shades y ∈ [lo, hi] (e.g. ±τ). */
export function lineChart(args: {
  title: string;
  xLabel: string;
  yLabel: string;
  series: Series[];
  logX?: boolean;
  hBand?: { lo: number; hi: number; label: string };
}): string {
  const pts = args.series.flatMap((s) => s.points);
  if (pts.length === 0) return '';
  const tx = (x: number) => (args.logX ? Math.log2(x) : x);
  const xs = pts.map((p) => tx(p.x));
  const ys = pts.flatMap((p) => [p.y, p.lo ?? p.y, p.hi ?? p.y]);
  if (args.hBand) ys.push(args.hBand.lo, args.hBand.hi);
  let x0 = Math.min(...xs);
  let x1 = Math.max(...xs);
  let y0 = Math.min(...ys);
  let y1 = Math.max(...ys);
  if (x1 === x0) {
    x0 -= 1;
    x1 += 1;
  }
  if (y1 === y0) {
    y0 -= Math.abs(y0) * 0.1 + 1e-9;
    y1 += Math.abs(y1) * 0.1 + 1e-9;
  }
  const pad = (y1 - y0) * 0.08;
  y0 -= pad;
  y1 += pad;
  const sx = (x: number) => PAD.l + ((tx(x) - x0) / (x1 - x0)) * (W - PAD.l - PAD.r);
  const sy = (y: number) => H - PAD.b - ((y - y0) / (y1 - y0)) * (H - PAD.t - PAD.b);
  const parts: string[] = [];
  parts.push(
    `<rect x="${PAD.l}" y="${PAD.t}" width="${W - PAD.l - PAD.r}" height="${H - PAD.t - PAD.b}" class="plot-bg"/>`,
  );
  if (args.hBand) {
    const a = sy(args.hBand.hi);
    const b = sy(args.hBand.lo);
    parts.push(
      `<rect x="${PAD.l}" y="${a.toFixed(1)}" width="${W - PAD.l - PAD.r}" height="${(b - a).toFixed(1)}" class="zone"><title>${esc(args.hBand.label)}</title></rect>`,
    );
  }
  for (const t of ticks(y0, y1)) {
    parts.push(
      `<line x1="${PAD.l}" x2="${W - PAD.r}" y1="${sy(t).toFixed(1)}" y2="${sy(t).toFixed(1)}" class="grid"/>` +
        `<text x="${PAD.l - 6}" y="${(sy(t) + 4).toFixed(1)}" class="tick" text-anchor="end">${esc(fmt(t, 4))}</text>`,
    );
  }
  const xt = args.logX
    ? Array.from(new Set(pts.map((p) => p.x))).sort((a, b) => a - b)
    : ticks(x0, x1).map((v) => v);
  for (const t of xt)
    parts.push(
      `<text x="${sx(t).toFixed(1)}" y="${H - PAD.b + 14}" class="tick" text-anchor="middle">${esc(fmt(t, 3))}</text>`,
    );
  for (const s of args.series) {
    const band = s.points.filter((p) => p.lo !== undefined && p.hi !== undefined);
    if (band.length > 1) {
      const up = band.map((p) => `${sx(p.x).toFixed(1)},${sy(p.hi!).toFixed(1)}`);
      const dn = band
        .slice()
        .reverse()
        .map((p) => `${sx(p.x).toFixed(1)},${sy(p.lo!).toFixed(1)}`);
      parts.push(`<polygon points="${[...up, ...dn].join(' ')}" fill="${s.colour}" opacity="0.15"/>`);
    } else
      for (const p of band)
        parts.push(
          `<line x1="${sx(p.x).toFixed(1)}" x2="${sx(p.x).toFixed(1)}" y1="${sy(p.lo!).toFixed(1)}" y2="${sy(p.hi!).toFixed(1)}" stroke="${s.colour}"/>`,
        );
    const line = s.points.map((p) => `${sx(p.x).toFixed(1)},${sy(p.y).toFixed(1)}`).join(' ');
    parts.push(
      `<polyline points="${line}" fill="none" stroke="${s.colour}" stroke-width="1.8"${s.dashed ? ' stroke-dasharray="5 3"' : ''}/>`,
    );
    for (const p of s.points)
      parts.push(
        `<circle cx="${sx(p.x).toFixed(1)}" cy="${sy(p.y).toFixed(1)}" r="2.6" fill="${s.colour}"/>`,
      );
  }
  const legend = args.series
    .map(
      (s, i) =>
        `<tspan x="${PAD.l + 8}" dy="${i === 0 ? 0 : 13}" fill="${s.colour}">■ ${esc(s.name)}</tspan>`,
    )
    .join('');
  parts.push(`<text x="${PAD.l + 8}" y="${PAD.t + 14}" class="legend">${legend}</text>`);
  parts.push(
    `<text x="${(W + PAD.l) / 2}" y="${H - 4}" class="axis" text-anchor="middle">${esc(args.xLabel)}</text>`,
  );
  parts.push(
    `<text x="12" y="${H / 2}" class="axis" text-anchor="middle" transform="rotate(-90 12 ${H / 2})">${esc(args.yLabel)}</text>`,
  );
  return `<figure><svg viewBox="0 0 ${W} ${H}" role="img" aria-label="${esc(args.title)}">${parts.join('')}</svg><figcaption>${esc(args.title)}</figcaption></figure>`;
}

/** Horizontal intervals (estimate ± half-width) against a shaded |x| ≤ τ zone. */
export function intervalChart(args: {
  title: string;
  rows: { label: string; value: number; lo: number; hi: number; colour: string }[];
  tau: number;
  unit: string;
}): string {
  if (args.rows.length === 0) return '';
  const rowH = 26;
  const h = PAD.t + args.rows.length * rowH + PAD.b;
  const left = 170;
  const xs = args.rows.flatMap((r) => [r.lo, r.hi]).concat([-args.tau * 1.5, args.tau * 1.5]);
  const m = Math.max(...xs.map(Math.abs)) * 1.05;
  const sx = (x: number) => left + ((x + m) / (2 * m)) * (W - left - PAD.r);
  const parts: string[] = [];
  parts.push(
    `<rect x="${sx(-args.tau).toFixed(1)}" y="${PAD.t}" width="${(sx(args.tau) - sx(-args.tau)).toFixed(1)}" height="${args.rows.length * rowH}" class="zone"><title>immaterial zone |Δ| &lt; τ</title></rect>`,
  );
  parts.push(
    `<line x1="${sx(0)}" x2="${sx(0)}" y1="${PAD.t}" y2="${PAD.t + args.rows.length * rowH}" class="grid"/>`,
  );
  args.rows.forEach((r, i) => {
    const y = PAD.t + i * rowH + rowH / 2;
    parts.push(`<text x="${left - 8}" y="${y + 4}" class="tick" text-anchor="end">${esc(r.label)}</text>`);
    parts.push(
      `<line x1="${sx(r.lo).toFixed(1)}" x2="${sx(r.hi).toFixed(1)}" y1="${y}" y2="${y}" stroke="${r.colour}" stroke-width="3"/>`,
    );
    parts.push(`<circle cx="${sx(r.value).toFixed(1)}" cy="${y}" r="4" fill="${r.colour}"/>`);
  });
  for (const t of ticks(-m, m))
    parts.push(
      `<text x="${sx(t).toFixed(1)}" y="${h - PAD.b + 14}" class="tick" text-anchor="middle">${esc(fmt(t, 3))}</text>`,
    );
  parts.push(
    `<text x="${(W + left) / 2}" y="${h - 4}" class="axis" text-anchor="middle">${esc(args.unit)}</text>`,
  );
  return `<figure><svg viewBox="0 0 ${W} ${h}" role="img" aria-label="${esc(args.title)}">${parts.join('')}</svg><figcaption>${esc(args.title)}</figcaption></figure>`;
}
