/**
 * Quoted against fitted vols, one colour per curve (an expiry's smile, or a currency's term structure):
 * quotes as open squares, the fit as a line, Monte Carlo checks as open circles. Colours run in order from
 * warm (first curve) to cool (last), so neighbouring expiries look related. The legend entries are buttons:
 * pressing one brings that curve forward and fades the others (keyboard: Tab, then Enter or Space).
 */
import { useId, useState } from 'react';
import { AxisFrame } from './charts.tsx';

export interface SmilePoint {
  x: number;
  y: number;
  /** Text shown on hover (screen readers read it too). */
  note?: string;
}

export interface SmileCurve {
  key: string;
  /** Legend text, e.g. "0.5y". */
  label: string;
  quoted: SmilePoint[];
  fitted: SmilePoint[];
  /** Monte Carlo reprices of vanillas outside the fit (extrapolation checks). */
  checks?: SmilePoint[];
}

/** Colour of curve `i` of `n`: hue from rust to slate blue, darker as it goes, so order reads in grey print too. */
export function curveColour(i: number, n: number): string {
  const t = n <= 1 ? 0.75 : i / (n - 1);
  const hue = 18 + t * 192;
  const light = 50 - t * 18;
  return `hsl(${hue.toFixed(0)} 62% ${light.toFixed(0)}%)`;
}

function ticks(lo: number, hi: number, n: number): number[] {
  const step0 = (hi - lo) / n;
  const mag = Math.pow(10, Math.floor(Math.log10(step0)));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= step0) ?? step0;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step)
    out.push(Number(v.toPrecision(12)));
  return out;
}

function range(values: number[]): [number, number] {
  const f = values.filter(Number.isFinite);
  if (f.length === 0) return [0, 1];
  let lo = Math.min(...f);
  let hi = Math.max(...f);
  if (lo === hi) {
    const d = Math.abs(lo) * 0.05 || 1;
    lo -= d;
    hi += d;
  }
  const pad = (hi - lo) * 0.07;
  return [lo - pad, hi + pad];
}

/** An SVG chart of quoted and fitted curves with a legend that focuses one curve. */
export function SmileChart(props: {
  title: string;
  curves: SmileCurve[];
  xLabel: string;
  yLabel: string;
  xFormat: (v: number) => string;
  yFormat: (v: number) => string;
  height?: number;
  /** Drawing width in SVG units; match the width the chart gets on screen so text keeps its size. */
  width?: number;
  /** Test id on the figure. */
  testId?: string;
}) {
  const id = useId();
  const [focus, setFocus] = useState<string | null>(null);
  const W = props.width ?? 560;
  const H = props.height ?? 300;
  const m = { l: 62, r: 14, t: 14, b: 42 };
  const all = props.curves.flatMap((c) => [...c.quoted, ...c.fitted, ...(c.checks ?? [])]);
  if (all.length === 0) return <p className="empty">Nothing to plot for {props.title.toLowerCase()}.</p>;
  const [x0, x1] = range(all.map((p) => p.x));
  const [y0, y1] = range(all.map((p) => p.y));
  const sx = (x: number): number => m.l + ((x - x0) / (x1 - x0)) * (W - m.l - m.r);
  const sy = (y: number): number => H - m.b - ((y - y0) / (y1 - y0)) * (H - m.t - m.b);
  const n = props.curves.length;
  const active = focus !== null && props.curves.some((c) => c.key === focus) ? focus : null;
  const order = props.curves.map((c, i) => ({ c, i }));
  // Draw the focused curve last, so it sits on top.
  if (active) order.sort((a, b) => (a.c.key === active ? 1 : 0) - (b.c.key === active ? 1 : 0));
  return (
    <figure className="chart" data-testid={props.testId}>
      <svg viewBox={`0 0 ${W} ${H}`} role="img" aria-labelledby={id}>
        <title id={id}>{props.title}</title>
        {ticks(y0, y1, 5).map((v) => (
          <g key={`y${v}`}>
            <line x1={m.l} x2={W - m.r} y1={sy(v)} y2={sy(v)} className="grid" />
            <text x={m.l - 6} y={sy(v) + 4} textAnchor="end" className="tick">
              {props.yFormat(v)}
            </text>
          </g>
        ))}
        {ticks(x0, x1, 6).map((v) => (
          <g key={`x${v}`}>
            <line x1={sx(v)} x2={sx(v)} y1={H - m.b} y2={H - m.b + 4} className="axis" />
            <text x={sx(v)} y={H - m.b + 17} textAnchor="middle" className="tick">
              {props.xFormat(v)}
            </text>
          </g>
        ))}
        <AxisFrame width={W} height={H} margin={m} xLabel={props.xLabel} yLabel={props.yLabel} yLabelX={13} />
        {order.map(({ c, i }) => {
          const colour = curveColour(i, n);
          const faded = active !== null && c.key !== active;
          const line = [...c.fitted]
            .filter((p) => Number.isFinite(p.y))
            .sort((a, b) => a.x - b.x)
            .map((p, k) => `${k === 0 ? 'M' : 'L'}${sx(p.x).toFixed(1)},${sy(p.y).toFixed(1)}`)
            .join('');
          return (
            <g key={c.key} opacity={faded ? 0.18 : 1} data-curve={c.key}>
              <path d={line} fill="none" stroke={colour} strokeWidth={c.key === active ? 2.8 : 1.8} />
              {c.fitted.length === 1 && (
                <circle cx={sx(c.fitted[0]!.x)} cy={sy(c.fitted[0]!.y)} r={2.5} fill={colour} />
              )}
              {c.quoted.map((p, k) => (
                <rect
                  key={`q${k}`}
                  x={sx(p.x) - 3.5}
                  y={sy(p.y) - 3.5}
                  width={7}
                  height={7}
                  fill="#fffdf8"
                  stroke={colour}
                  strokeWidth={1.6}
                >
                  {p.note && <title>{p.note}</title>}
                </rect>
              ))}
              {(c.checks ?? []).map((p, k) => (
                <circle
                  key={`c${k}`}
                  cx={sx(p.x)}
                  cy={sy(p.y)}
                  r={4}
                  fill="none"
                  stroke={colour}
                  strokeWidth={1.4}
                  strokeDasharray="2 1.5"
                >
                  {p.note && <title>{p.note}</title>}
                </circle>
              ))}
            </g>
          );
        })}
      </svg>
      <figcaption>
        <span className="chart-title">{props.title}</span>
        <span className="legend-item">
          <svg width="12" height="10" aria-hidden="true">
            <rect x="2" y="1" width="8" height="8" fill="none" stroke="currentColor" strokeWidth="1.4" />
          </svg>
          quoted
        </span>
        <span className="legend-item">
          <svg width="20" height="10" aria-hidden="true">
            <line x1="0" x2="20" y1="5" y2="5" stroke="currentColor" strokeWidth="2" />
          </svg>
          fitted
        </span>
        {props.curves.some((c) => (c.checks ?? []).length > 0) && (
          <span className="legend-item">
            <svg width="12" height="10" aria-hidden="true">
              <circle
                cx="6"
                cy="5"
                r="4"
                fill="none"
                stroke="currentColor"
                strokeWidth="1.3"
                strokeDasharray="2 1.5"
              />
            </svg>
            checked by Monte Carlo, not fitted
          </span>
        )}
        {n > 1 && (
          <span
            role="group"
            aria-label={`${props.title}: bring one curve forward`}
            style={{ display: 'inline-flex', flexWrap: 'wrap', gap: 4 }}
          >
            {props.curves.map((c, i) => (
              <button
                key={c.key}
                type="button"
                aria-pressed={c.key === active}
                onClick={() => setFocus(c.key === active ? null : c.key)}
                style={{
                  padding: '1px 7px',
                  fontSize: '0.85em',
                  borderColor: curveColour(i, n),
                  borderWidth: c.key === active ? 2 : 1,
                  fontWeight: c.key === active ? 600 : 400,
                }}
              >
                <span aria-hidden="true" style={{ color: curveColour(i, n) }}>
                  ■{' '}
                </span>
                {c.label}
              </button>
            ))}
          </span>
        )}
      </figcaption>
    </figure>
  );
}
