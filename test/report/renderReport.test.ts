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
