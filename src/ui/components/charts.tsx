/**
 * Small SVG charts drawn by hand (no chart library): lines with optional markers, and intervals
 * around a value with a shaded materiality band. Both scale to their container's width.
 */
import { useId } from 'react';
import { num } from './format.ts';

export interface LineSeries {
  name: string;
  points: { x: number; y: number }[];
  /** Solid line, dashed line, or markers only. */
  style?: 'line' | 'dashed' | 'markers';
  /** Index into the chart palette. */
  tone?: number;
}

/** Palette of series (distinct in lightness too, so lines stay apart in grey print). */
const TONES = ['#1f4e79', '#c2562b', '#4b7d3a', '#7a4f9a', '#8c6d1f', '#2f7f86', '#9b3b5a'];

function niceTicks(lo: number, hi: number, n = 5): number[] {
  if (!(hi > lo)) {
    const d = Math.abs(lo) > 0 ? Math.abs(lo) * 0.1 : 1;
    lo -= d;
    hi += d;
  }
  const step0 = (hi - lo) / n;
  const mag = Math.pow(10, Math.floor(Math.log10(step0)));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= step0) ?? step0;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step)
    out.push(Number(v.toPrecision(12)));
  return out;
}

/** Tick labels with as many decimals as the tick step needs, so neighbouring ticks never print alike. */
function stepFormat(ticks: number[]): (v: number) => string {
  const step = ticks.length > 1 ? Math.abs(ticks[1]! - ticks[0]!) : 1;
  const decimals = Math.max(0, Math.min(10, -Math.floor(Math.log10(step || 1) + 1e-9)));
  const big = Math.max(...ticks.map(Math.abs)) >= 1e6 && step >= 1;
  return (v: number) =>
    big
      ? num(v, Math.max(3, Math.ceil(Math.log10(Math.abs(v) || 1) - Math.log10(step)) + 1))
      : v.toFixed(decimals).replace('-', '−');
}

function extent(values: number[]): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values)
    if (Number.isFinite(v)) {
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
  if (lo === Infinity) return [0, 1];
  if (lo === hi) return [lo - (Math.abs(lo) || 1) * 0.05, hi + (Math.abs(hi) || 1) * 0.05];
  const pad = (hi - lo) * 0.06;
  return [lo - pad, hi + pad];
}

/** A line chart with axes, ticks and a legend. `yFormat` formats tick labels. */
/**
 * The two axis lines of a plot area and their labels (x below, y rotated on the left), shared by the charts.
 * `margin` is the plot area's distance from each edge of the `width` × `height` drawing.
 */
export function AxisFrame(props: {
  width: number;
  height: number;
  margin: { l: number; r: number; t: number; b: number };
  xLabel: string;
  yLabel: string;
  /** x of the rotated y label's centre (default 12). */
  yLabelX?: number;
}) {
  const { width: W, height: H, margin: m } = props;
  const yx = props.yLabelX ?? 12;
  const midY = (m.t + H - m.b) / 2;
  return (
    <>
      <line x1={m.l} x2={W - m.r} y1={H - m.b} y2={H - m.b} className="axis" />
      <line x1={m.l} x2={m.l} y1={m.t} y2={H - m.b} className="axis" />
      <text x={(m.l + W - m.r) / 2} y={H - 6} textAnchor="middle" className="axis-label">
        {props.xLabel}
      </text>
      <text
        x={yx}
        y={midY}
        textAnchor="middle"
        className="axis-label"
        transform={`rotate(-90 ${yx} ${midY})`}
      >
        {props.yLabel}
      </text>
    </>
  );
}

export function LineChart(props: {
  title: string;
  series: LineSeries[];
  xLabel: string;
  yLabel: string;
  yFormat?: (v: number) => string;
  xFormat?: (v: number) => string;
  height?: number;
  logX?: boolean;
  /** What to say when no series has a point (default: no data to plot for the title). */
  empty?: string;
}) {
  const id = useId();
  const W = 560;
  const H = props.height ?? 240;
  const m = { l: 58, r: 12, t: 12, b: 40 };
  const pts = props.series.flatMap((s) => s.points);
  const tx = (x: number): number => (props.logX ? Math.log(Math.max(x, 1e-9)) : x);
  const [x0, x1] = extent(pts.map((p) => tx(p.x)));
  const [y0, y1] = extent(pts.map((p) => p.y));
  const sx = (x: number): number => m.l + ((tx(x) - x0) / (x1 - x0)) * (W - m.l - m.r);
  const sy = (y: number): number => H - m.b - ((y - y0) / (y1 - y0)) * (H - m.t - m.b);
  const yf = props.yFormat ?? stepFormat(niceTicks(y0, y1));
  const xTicks = props.logX ? niceTicks(Math.exp(x0), Math.exp(x1)).filter((v) => v > 0) : niceTicks(x0, x1);
  const xf = props.xFormat ?? stepFormat(xTicks);
  if (pts.length === 0)
    return <p className="empty">{props.empty ?? `No data to plot for “${props.title}”.`}</p>;
  return (
    <figure className="chart">
      <svg viewBox={`0 0 ${W} ${H}`} role="img" aria-labelledby={id}>
        <title id={id}>{props.title}</title>
        {niceTicks(y0, y1).map((v) => (
          <g key={`y${v}`}>
            <line x1={m.l} x2={W - m.r} y1={sy(v)} y2={sy(v)} className="grid" />
            <text x={m.l - 6} y={sy(v) + 4} textAnchor="end" className="tick">
              {yf(v)}
            </text>
          </g>
        ))}
        {xTicks.map((v) => (
          <text key={`x${v}`} x={sx(v)} y={H - m.b + 16} textAnchor="middle" className="tick">
            {xf(v)}
          </text>
        ))}
        <AxisFrame width={W} height={H} margin={m} xLabel={props.xLabel} yLabel={props.yLabel} />
        {props.series.map((s, i) => {
          const colour = TONES[(s.tone ?? i) % TONES.length];
          const sorted = [...s.points].filter((p) => Number.isFinite(p.y)).sort((a, b) => a.x - b.x);
          const d = sorted
            .map((p, k) => `${k === 0 ? 'M' : 'L'}${sx(p.x).toFixed(1)},${sy(p.y).toFixed(1)}`)
            .join('');
          return (
            <g key={s.name}>
              {s.style !== 'markers' && (
                <path
                  d={d}
                  fill="none"
                  stroke={colour}
                  strokeWidth={2}
                  strokeDasharray={s.style === 'dashed' ? '6 4' : undefined}
                />
              )}
              {(s.style === 'markers' || sorted.length < 12) &&
                sorted.map((p, k) =>
                  s.style === 'markers' ? (
                    <rect
                      key={k}
                      x={sx(p.x) - 3.5}
                      y={sy(p.y) - 3.5}
                      width={7}
                      height={7}
                      fill="none"
                      stroke={colour}
                      strokeWidth={1.6}
                    />
                  ) : (
                    <circle key={k} cx={sx(p.x)} cy={sy(p.y)} r={2.6} fill={colour} />
                  ),
                )}
            </g>
          );
        })}
      </svg>
      <figcaption>
        <span className="chart-title">{props.title}</span>
        {props.series.map((s, i) => (
          <span key={s.name} className="legend-item">
            <svg width="22" height="10" aria-hidden="true">
              {s.style === 'markers' ? (
                <rect
                  x="7"
                  y="1"
                  width="8"
                  height="8"
                  fill="none"
                  stroke={TONES[(s.tone ?? i) % TONES.length]}
                  strokeWidth="1.6"
                />
              ) : (
                <line
                  x1="0"
                  x2="22"
                  y1="5"
                  y2="5"
                  stroke={TONES[(s.tone ?? i) % TONES.length]}
                  strokeWidth="2"
                  strokeDasharray={s.style === 'dashed' ? '5 3' : undefined}
                />
              )}
            </svg>
            {s.name}
          </span>
        ))}
      </figcaption>
    </figure>
  );
}

export interface IntervalRow {
  label: string;
  value: number;
  /** Half-width of the interval (e.g. z·SE). */
  half: number;
  /** Extra budget added to both sides, drawn lighter. */
  budget?: number;
  tone?: 'keep' | 'drop' | 'undecided' | 'neutral';
}

/** Horizontal intervals around values, with the ±τ materiality band shaded. */
export function IntervalChart(props: {
  title: string;
  rows: IntervalRow[];
  tau?: number;
  unit: string;
  /** What to say when there are no rows (default: nothing to show for the title). */
  empty?: string;
}) {
  const id = useId();
  const W = 560;
  const rowH = 30;
  const m = { l: 150, r: 16, t: 10, b: 34 };
  const H = m.t + m.b + rowH * Math.max(1, props.rows.length);
  const tau = props.tau ?? 0;
  const span =
    Math.max(tau * 1.3, ...props.rows.map((r) => Math.abs(r.value) + r.half + (r.budget ?? 0))) || 1;
  const sx = (v: number): number => m.l + ((v + span) / (2 * span)) * (W - m.l - m.r);
  if (props.rows.length === 0)
    return <p className="empty">{props.empty ?? `Nothing to show for “${props.title}”.`}</p>;
  return (
    <figure className="chart">
      <svg viewBox={`0 0 ${W} ${H}`} role="img" aria-labelledby={id}>
        <title id={id}>{props.title}</title>
        {tau > 0 && (
          <rect x={sx(-tau)} y={m.t} width={sx(tau) - sx(-tau)} height={H - m.t - m.b} className="band" />
        )}
        <line x1={sx(0)} x2={sx(0)} y1={m.t} y2={H - m.b} className="axis" />
        {niceTicks(-span, span, 6).map((v) => (
          <text key={v} x={sx(v)} y={H - m.b + 16} textAnchor="middle" className="tick">
            {num(v, 3)}
          </text>
        ))}
        <text x={(m.l + W - m.r) / 2} y={H - 4} textAnchor="middle" className="axis-label">
          {props.unit}
          {tau > 0 ? ` (shaded: ±τ = ±${num(tau, 3)})` : ''}
        </text>
        {props.rows.map((r, i) => {
          const y = m.t + rowH * i + rowH / 2;
          const b = r.budget ?? 0;
          return (
            <g key={r.label} className={`iv iv-${r.tone ?? 'neutral'}`}>
              <text x={m.l - 8} y={y + 4} textAnchor="end" className="row-label">
                {r.label}
              </text>
              {b > 0 && (
                <line
                  x1={sx(r.value - r.half - b)}
                  x2={sx(r.value + r.half + b)}
                  y1={y}
                  y2={y}
                  className="iv-budget"
                />
              )}
              <line x1={sx(r.value - r.half)} x2={sx(r.value + r.half)} y1={y} y2={y} className="iv-ci" />
              <line
                x1={sx(r.value - r.half)}
                x2={sx(r.value - r.half)}
                y1={y - 6}
                y2={y + 6}
                className="iv-ci"
              />
              <line
                x1={sx(r.value + r.half)}
                x2={sx(r.value + r.half)}
                y1={y - 6}
                y2={y + 6}
                className="iv-ci"
              />
              <circle cx={sx(r.value)} cy={y} r={4.5} className="iv-dot" />
            </g>
          );
        })}
      </svg>
      <figcaption>
        <span className="chart-title">{props.title}</span>
        <span className="legend-item">dot: estimate · bar: ± z·SE · thin extension: error budget b</span>
      </figcaption>
    </figure>
  );
}
