import { describe, it, expect } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { FitScreen } from '../../../src/ui/screens/FitScreen.tsx';
import { AppContext, type AppApi } from '../../../src/ui/state/appContext.ts';
import type { SavedStudy } from '../../../src/engine/study/types.ts';

// The bundled invented demo study is only the input here: the checks are on what the screen shows, not on numbers.
const demo = JSON.parse(
  fs.readFileSync(path.resolve(__dirname, '../../../samples/studies/demo.study.json'), 'utf8'),
) as SavedStudy;

function render(study: SavedStudy | null): string {
  const app = {
    doc: {
      study,
      stale: false,
      markets: study?.input.markets.slice(0, 1) ?? [],
      deal: study?.input.deal ?? {},
    },
    engine: {},
  } as unknown as AppApi;
  return renderToStaticMarkup(createElement(AppContext.Provider, { value: app }, createElement(FitScreen)));
}

describe('Fit screen', () => {
  it('opens on the richest variant with a smile per equity and the rate vols on their own chart', () => {
    const html = render(demo);
    expect(html).toMatch(/data-testid="smile-ALDR"/);
    expect(html).toMatch(/data-testid="ratevols-DOM"/);
    expect(html).toMatch(/normal vol \(bp\)/);
    // one residual group per equity expiry plus one for the rates
    const richest = demo.ladder.reduce((a, v) => (v.factors.length > a.factors.length ? v : a));
    const expiries = new Set(
      richest.calibration.fit
        .filter((f) => !/caplet|swaption/.test(f.instrument))
        .map((f) => f.instrument.match(/T=([\d.]+)/)![1]),
    );
    expect((html.match(/class="group-head"/g) ?? []).length).toBe(expiries.size + 1);
  });
  it('says why rate vols are absent for a variant with rates on the curve', () => {
    const onlyEquity = {
      ...demo,
      ladder: demo.ladder.filter((v) => v.factors.length === 1 && v.factors[0] === 'stochVol'),
    };
    expect(onlyEquity.ladder.length).toBe(1);
    const html = render(onlyEquity);
    expect(html).toMatch(/data-testid="no-rate-vols"/);
    expect(html).toMatch(/no cap or swaption vols are fitted/);
  });
  it('states in words when an instrument has no Monte Carlo reprice', () => {
    const noMc = {
      ...demo,
      ladder: demo.ladder.map((v) => ({
        ...v,
        calibration: { ...v.calibration, fit: v.calibration.fit.filter((f) => f.mcError === null) },
      })),
    };
    const html = render(noMc);
    expect(html).toMatch(/none in this study \(see note\)/);
    expect(html).toMatch(/None in this study: it carries no Monte Carlo reprice/);
  });
  it('explains a study run on one snapshot instead of drawing empty stability charts', () => {
    const one = { ...demo, results: { ...demo.results, stability: demo.results.stability.slice(0, 1) } };
    const html = render(one);
    expect(html).toContain(`run on one snapshot (${demo.results.stability[0]!.date})`);
    expect(html).not.toMatch(/Verdicts per date/);
    expect(render(demo)).toMatch(/Verdicts per date/);
  });
  it('keeps the empty state when there is no study yet', () => {
    expect(render(null)).toMatch(/No calibration yet/);
  });
});
