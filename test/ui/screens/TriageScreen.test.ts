import { describe, it, expect } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { TriageScreen } from '../../../src/ui/screens/TriageScreen.tsx';
import { AppContext, type AppApi } from '../../../src/ui/state/appContext.ts';
import type { SavedStudy } from '../../../src/engine/study/types.ts';

// The bundled invented demo study is only the input here: the checks are on what the screen shows, not on numbers.
const demo = JSON.parse(
  fs.readFileSync(path.resolve(__dirname, '../../../samples/studies/demo.study.json'), 'utf8'),
) as SavedStudy;

function render(study: SavedStudy): string {
  const app = {
    doc: {
      study,
      stale: false,
      deal: study.input.deal,
      markets: study.input.markets,
      settings: study.input.settings,
      raw: {},
    },
    dispatch: () => {},
    task: { kind: 'idle' },
    served: new Set(['study.run']),
    runStudy: () => {},
    cancelTask: () => {},
  } as unknown as AppApi;
  return renderToStaticMarkup(
    createElement(AppContext.Provider, { value: app }, createElement(TriageScreen, { goTo: () => {} })),
  );
}

const text = (html: string) => html.replace(/<[^>]+>/g, '').replace(/&[a-z#0-9]+;/g, ' ');

describe('Triage screen: budgets', () => {
  it('shows each decided factor’s error budget in the deal currency with its parts', () => {
    const html = render(demo);
    const ccy = demo.input.deal.currency;
    for (const f of Object.keys(demo.results.budgetParts ?? {})) {
      const card = new RegExp(`data-testid="budget-${f}">([\\s\\S]*?)</dd>`).exec(html)?.[1] ?? '';
      expect(text(card), `budget of ${f}`).toMatch(
        new RegExp(`^[−\\d.,]+ ${ccy}\\s*step halving .* \\+ calibration .* \\+\\s*repricing`),
      );
    }
  });
  it('shows a hedge-ratio verdict’s budget and its step-halving change, and says vega has none', () => {
    const html = render(demo);
    expect(demo.results.greekVerdicts.length).toBeGreaterThan(0);
    for (const g of demo.results.greekVerdicts) {
      const row = new RegExp(`data-testid="greek-verdict-${g.greek}-${g.factor}">([\\s\\S]*?)</tr>`).exec(
        html,
      )?.[1];
      expect(row, `row of ${g.greek}/${g.factor}`).toBeDefined();
      if (g.stepHalvingChange) expect(text(row!)).toMatch(/\d ± \d/);
      else expect(text(row!)).toMatch(g.greek === 'vega' ? /none.*not checked \(vega\)/ : /not in this file/);
    }
    expect(html).toMatch(/<th class="num">Threshold \(DOM\)<\/th>/);
    expect(html).toMatch(/Delta \(DOM per 1% spot\)/);
  });
  it('names correlation pairs in words in the sweep chart titles', () => {
    const html = render(demo);
    const titles = [...html.matchAll(/class="chart-title">([^<]*)</g)].map((m) => m[1]!);
    const sweeps = titles.filter((t) => /correlation: price over/.test(t));
    expect(sweeps.length).toBe(demo.results.sweeps.length);
    for (const t of sweeps) {
      expect(t).not.toMatch(/\b(eq|var|rate|fx):/);
      expect(t).toMatch(/^[A-Z]+ (spot|variance|short rate) – [A-Z/]+ (short rate|FX|variance) correlation/);
    }
  });
});
