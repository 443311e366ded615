import { describe, it, expect } from 'vitest';
import { renderReport, CAUTION } from '../../src/report/index.ts';
import { fixtureStudy } from '../engine/study/studyFixture.ts';

describe('renderReport', () => {
  const html = renderReport(fixtureStudy());
  it('is one self-contained page: no scripts and no external assets', () => {
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/(src|href)=["']?(https?:)?\/\//i);
    expect(html).not.toMatch(/@import|url\(/i);
  });
  it('puts the answer before the evidence and carries the validation caution', () => {
    expect(html.indexOf('Which stochastic factors')).toBeLessThan(html.indexOf('<h2>Deal</h2>'));
    expect(html).toContain(CAUTION.replace(/'/g, '&#39;'));
  });
  it('reports an undecided factor as undecided', () => {
    expect(html).toMatch(/not yet decided at this path count/);
    expect(html).toMatch(/>undecided</);
  });
  it('escapes text from the study', () => {
    const s = fixtureStudy();
    s.input.deal.name = '<b>x</b> & "y"';
    const h = renderReport(s);
    expect(h).toContain('&lt;b&gt;x&lt;/b&gt; &amp; &quot;y&quot;');
    expect(h).not.toContain('<b>x</b>');
  });
});

describe('renderReport on the bundled demo study', () => {
  it('shows every section of a full study, the answer first and the caution last', async () => {
    const { readFileSync } = await import('node:fs');
    const { parseStudyFile } = await import('../../src/engine/study/index.ts');
    const s = parseStudyFile(
      JSON.parse(readFileSync(new URL('../../samples/studies/demo.study.json', import.meta.url), 'utf8')),
    );
    const h = renderReport(s);
    const order = [
      'Which stochastic factors',
      '<h2>Deal</h2>',
      '<h2>Market</h2>',
      '<h2>Calibration fit</h2>',
      '<h2>Ladder</h2>',
      '<h2>Factor impact with confidence intervals</h2>',
      '<h2>Attribution',
      '<h2>Local-volatility diagnostic</h2>',
      '<h2>Hedge ratios</h2>',
      '<h2>Unquoted correlations</h2>',
      '<h2>Cost of each factor</h2>',
      'Parameter and verdict stability',
      '<h2>Convergence</h2>',
      '<h2>Reproducibility</h2>',
      '<h2>Limitations</h2>',
    ];
    let at = -1;
    for (const marker of order) {
      const i = h.indexOf(marker);
      expect(i, marker).toBeGreaterThan(at);
      at = i;
    }
    expect(h.lastIndexOf('does not replace the firm')).toBeGreaterThan(at);
    expect((h.match(/<svg /g) ?? []).length).toBeGreaterThan(3);
    expect(h).toContain(s.hash);
  });
});
