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

describe('renderReport: the parts of the error budget', () => {
  /** The hand-written fixture with one decided factor, its budget parts and a variant's repricing error. */
  const withParts = () => {
    const s = fixtureStudy();
    s.verdicts[0] = {
      ...s.verdicts[0]!,
      verdict: 'undecided',
      decision: {
        factor: 'domesticRate',
        verdict: 'undecided',
        delta: 0.2,
        se: 0.01,
        budget: 0.0875,
        z: 1.96,
        statistic: -1,
        pValue: 1,
        side: 'drop',
      },
    };
    s.results.budgetParts = {
      domesticRate: { stepHalving: 0.0125, calibration: 0.025, repricing: 0.05, exerciseGap: null },
    };
    s.results.repricing = {
      base: {
        volExcess: 0.0042,
        instrument: 'ALDR call K=4234.48 T=1 (Monte Carlo reprice)',
        quotes: 9,
        capletNormalVolExcess: 0.00001,
      },
    };
    s.ladder[0]!.calibration.fit.push({
      instrument: 'ALDR call K=4234.48 T=1 (Monte Carlo reprice)',
      marketVol: 0.17,
      modelVol: 0.175,
      priceError: 1,
      mcError: { value: 1, se: 0.5 },
      calibrated: true,
      mcVolSe: 0.0004,
    });
    return s;
  };
  it('lists step halving, calibration, repricing and exercise gap beside the total', () => {
    const h = renderReport(withParts());
    for (const head of ['of which step halving', 'calibration', 'repricing', 'exercise gap'])
      expect(h).toContain(`<th>${head}</th>`);
    // The row carries the parts in the order of the header: 0.0125, 0.025, 0.05, n/a (no exercise right).
    expect(h).toMatch(/<td>0\.0875<\/td><td>0\.0125<\/td><td>0\.025<\/td><td>0\.05<\/td><td>n\/a<\/td>/);
    expect(h).toMatch(/<strong>repricing<\/strong>, \|deal vega\| times/);
    expect(h).not.toContain('written before the parts were recorded');
  });
  it("shows each variant's repricing error in vol bp with the vanilla that sets it", () => {
    const h = renderReport(withParts());
    expect(h).toContain('Vol error beyond 2 SE (vol bp)');
    // 0.0042 in decimal vol = 42 vol bp; caplets 0.00001 = 0.1 bp of normal vol.
    expect(h).toMatch(
      /<td>9<\/td><td>42<\/td><td>ALDR call K=4234\.48 T=1 \(Monte Carlo reprice\)<\/td><td>0\.1<\/td>/,
    );
  });
  it('renders a study written before the parts were recorded, saying so', () => {
    const s = withParts();
    delete s.results.budgetParts;
    delete s.results.repricing;
    const h = renderReport(s);
    expect(h).toContain('written before the parts were recorded');
    expect(h).not.toContain('Vol error beyond 2 SE');
    expect(h).toMatch(/<td>0\.0875<\/td><td>—<\/td><td>—<\/td><td>—<\/td><td>—<\/td>/);
  });
});
