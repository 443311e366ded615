/**
 * The report shows the study's diagnostics: what would decide each undecided factor, the step check of the local-vol
 * split, and the variance–rate sweeps labelled as run under Euler. The study is the hand-written fixture with
 * invented numbers (a rendering check, not an oracle for any price); older files without these fields still render.
 */
import { describe, it, expect } from 'vitest';
import { renderReport } from '../../src/report/index.ts';
import { fixtureStudy } from '../engine/study/studyFixture.ts';
import { parseStudyFile, sealStudy, checkStudyHash } from '../../src/engine/study/savedStudy.ts';
import { whatWouldDecide } from '../../src/engine/study/whatWouldDecide.ts';
import type { SavedStudy } from '../../src/engine/study/types.ts';

function withDiagnostics(): SavedStudy {
  const s = structuredClone(fixtureStudy()) as SavedStudy;
  const w = whatWouldDecide({
    decision: { delta: 0.09, se: 0.001, z: 2.2, budget: 0.008 },
    tau: 0.1,
    parts: { stepHalving: 0.008, calibration: 0, repricing: 0, exerciseGap: null },
    context: {
      paths: 4000,
      batchSize: 1000,
      maxStep: 0.25,
      stepChange: { value: 0.01, se: 0.001 },
      vegaPerUnit: null,
      calibration: null,
      repricing: null,
      dual: null,
    },
  });
  s.results.whatWouldDecide = { domesticRate: w };
  s.results.localVol = {
    smile: { value: 0.2, se: 0.01 },
    dynamics: { value: 0.5, se: 0.02 },
    total: { value: 0.7, se: 0.02 },
    stepHalving: {
      maxStep: 1 / 52,
      paths: 1000,
      smile: { value: 0.001, se: 0.002 },
      dynamics: { value: 0.08, se: 0.01 },
      flagAbove: 0.025,
      flagged: ['dynamics'],
    },
  };
  const pt = (rho: number, v: number) => ({ rho, price: { value: v, se: 0.1 }, deltas: {} });
  s.results.sweeps = [
    {
      pair: 'var:ALDR|rate:DOM',
      range: [-0.3, 0.3],
      base: 0,
      scheme: 'euler',
      schemeNote: 'Euler, ρ(v,r) ≠ 0 needs it',
      basePoint: pt(0, 10.4),
      points: [pt(-0.3, 10.3), pt(0, 10.4), pt(0.3, 10.5)],
      band: 0.2,
      materialSomewhere: [],
      priceMovesMaterially: true,
    },
  ];
  const { hash: _h, ...rest } = s;
  return sealStudy(rest);
}

describe('report: diagnostics', () => {
  const s = withDiagnostics();
  const html = renderReport(s);
  it('shows what would decide an undecided factor, its largest part first, with the suggested step', () => {
    expect(html).toContain('<h2>What would decide the undecided factors</h2>');
    const w = s.results.whatWouldDecide!.domesticRate!;
    expect(w.largest).toBe('stepHalving');
    expect(html).toContain('<strong>step halving</strong>');
    expect(html).toMatch(/largest step ≤ [\d.]+ days/);
    expect(html).toMatch(/\d[\d,]* paths/);
  });
  it('shows the local-vol step check and flags the part that moved', () => {
    expect(html).toContain('<h3>Step check of the split</h3>');
    expect(html).toContain('step too coarse');
    expect(html.match(/step too coarse/g)!.length).toBe(1);
  });
  it('labels a variance–rate sweep as run under Euler with its own base price and the discretisation caveat', () => {
    expect(html).toContain('Euler, ρ(v,r) ≠ 0 needs it');
    expect(html).toContain('10.4 ± 0.1');
    expect(html).toMatch(/Euler adds its own discretisation bias/);
  });
  it('the study with these fields loads and keeps its hash; the older file without them loads and renders too', () => {
    const back = parseStudyFile(JSON.parse(JSON.stringify(s)));
    expect(checkStudyHash(back).ok).toBe(true);
    const old = fixtureStudy();
    expect(old.results.whatWouldDecide).toBeUndefined();
    const h = renderReport(parseStudyFile(JSON.parse(JSON.stringify(old))));
    expect(h).not.toContain('What would decide');
    expect(h).not.toContain('Step check of the split');
  });
  it('a file whose what-would-decide entry has a negative size is refused, naming the field', () => {
    const bad = structuredClone(s) as SavedStudy;
    bad.results.whatWouldDecide!.domesticRate!.items[0]!.size = -1;
    expect(() => parseStudyFile(bad)).toThrow(
      /study\.results\.whatWouldDecide\.domesticRate\.items\[0\]\.size/,
    );
  });
});
