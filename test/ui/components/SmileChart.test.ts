import { describe, it, expect } from 'vitest';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { SmileChart, curveColour, type SmileCurve } from '../../../src/ui/components/SmileChart.tsx';

const curves: SmileCurve[] = [
  {
    key: '0.5',
    label: '0.5y',
    quoted: [
      { x: 0.9, y: 0.22 },
      { x: 1, y: 0.2 },
      { x: 1.1, y: 0.19 },
    ],
    fitted: [
      { x: 0.9, y: 0.221 },
      { x: 1, y: 0.2 },
      { x: 1.1, y: 0.189 },
    ],
  },
  {
    key: '2',
    label: '2y',
    quoted: [{ x: 1, y: 0.21 }],
    fitted: [{ x: 1, y: 0.21 }],
    checks: [{ x: 0.8, y: 0.25 }],
  },
];

const render = (c: SmileCurve[]): string =>
  renderToStaticMarkup(
    createElement(SmileChart, {
      title: 'BRIX smile',
      curves: c,
      xLabel: 'K / S0',
      yLabel: 'vol',
      xFormat: (x: number) => x.toFixed(2),
      yFormat: (y: number) => `${(y * 100).toFixed(0)}%`,
    }),
  );

describe('smile chart', () => {
  it('draws one square per quote, one line per curve and one circle per check', () => {
    const html = render(curves);
    const plot = html.slice(0, html.indexOf('<figcaption'));
    expect((plot.match(/<rect /g) ?? []).length).toBe(4);
    expect((plot.match(/<path /g) ?? []).length).toBe(2);
    expect((plot.match(/stroke-dasharray="2 1.5"/g) ?? []).length).toBe(1);
    expect(html).toMatch(/checked by Monte Carlo, not fitted/);
  });
  it('offers one legend button per curve, none pressed at first', () => {
    const html = render(curves);
    expect((html.match(/aria-pressed="false"/g) ?? []).length).toBe(2);
  });
  it('says there is nothing to plot instead of drawing empty axes', () => {
    expect(render([{ key: 'a', label: 'a', quoted: [], fitted: [] }])).toMatch(
      /Nothing to plot for brix smile/,
    );
  });
  it('gives every curve of a set its own colour', () => {
    const c = Array.from({ length: 8 }, (_, i) => curveColour(i, 8));
    expect(new Set(c).size).toBe(8);
  });
});
