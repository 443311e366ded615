import { describe, it, expect } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { DealScreen, PastFixingsPanel, pastFixingRows } from '../../../src/ui/screens/DealScreen.tsx';
import { AppContext, type AppApi } from '../../../src/ui/state/appContext.ts';
import { IssueContext, issuesByField } from '../../../src/ui/components/fields.tsx';
import { checkDeal } from '../../../src/engine/deal/compileDeal.ts';
import type { DealInput } from '../../../src/engine/deal/types.ts';

// The bundled invented deals are only inputs here: the checks are on what the screen shows, not on numbers.
const read = (f: string) =>
  JSON.parse(fs.readFileSync(path.resolve(__dirname, `../../../samples/deals/${f}`), 'utf8')) as DealInput;

function renderScreen(deal: DealInput): string {
  const app = {
    doc: { deal, settings: { rules: undefined } },
    dispatch: () => {},
    engine: { call: () => new Promise(() => {}) },
    platform: {},
    notify: () => {},
  } as unknown as AppApi;
  return renderToStaticMarkup(createElement(AppContext.Provider, { value: app }, createElement(DealScreen)));
}

function renderPanel(deal: DealInput): string {
  const check = checkDeal(deal);
  return renderToStaticMarkup(
    createElement(
      IssueContext.Provider,
      { value: issuesByField(check.issues) },
      createElement(PastFixingsPanel, {
        deal,
        needs: check.historyNeeds,
        past: check.compiled?.history,
        update: () => {},
        mark: (p: string) => p,
      }),
    ),
  );
}

describe('Deal screen: past fixings', () => {
  it('is not shown for a deal that starts on its valuation date', () => {
    const html = renderScreen(read('autocallable-memory.json'));
    expect(html).not.toMatch(/data-testid="past-fixings"/);
    expect(html).toMatch(/<h2>Events<\/h2>/);
  });
  it('is shown for the seasoned template with one row per given past fixing', () => {
    const html = renderScreen(read('autocallable-memory-seasoned.json'));
    expect(html).toMatch(/data-testid="past-fixings"/);
    for (const d of ['2026-02-10', '2026-05-10', '2026-08-10', '2026-11-10'])
      expect(html).toContain(`data-past-field="deal.history.fixings.ALDR[&quot;${d}&quot;]"`);
  });
  it('lists every past date the deal needs, with the engine message at the missing one', () => {
    const deal = read('autocallable-memory-seasoned.json');
    delete deal.history!.fixings!.ALDR!['2026-05-10'];
    const rows = pastFixingRows(deal, checkDeal(deal).historyNeeds);
    expect(rows.map((r) => r.date)).toEqual(['2026-02-10', '2026-05-10', '2026-08-10', '2026-11-10']);
    const html = renderPanel(deal);
    expect(html).toContain('1 past value still needed.');
    const row = html.slice(
      html.indexOf('data-past-field="deal.history.fixings.ALDR[&quot;2026-05-10&quot;]"'),
    );
    const cell = row.slice(0, row.indexOf('</tr>'));
    expect(cell).toContain('event &quot;coupon&quot; on 2026-05-10');
    expect(cell).toContain('give the level observed that day');
    expect(cell).toMatch(/aria-invalid="true"/);
  });
  it('shows the coupons already paid and the state the past leaves', () => {
    const html = renderPanel(read('autocallable-memory-seasoned.json'));
    expect(html).toContain('Every past value the deal needs is given.');
    expect((html.match(/<li>/g) ?? []).length).toBe(3);
    expect(html).toMatch(/data-testid="past-state">State after the past: missed = 1/);
  });
  it('keeps a value given for a date nothing reads as a row, so it can be removed', () => {
    const deal = read('autocallable-memory-seasoned.json');
    deal.history!.fixings!.ALDR!['2026-11-27'] = 3100;
    const html = renderPanel(deal);
    const row = html.slice(
      html.indexOf('data-past-field="deal.history.fixings.ALDR[&quot;2026-11-27&quot;]"'),
    );
    const cell = row.slice(0, row.indexOf('</tr>'));
    expect(cell).toContain('nothing reads it');
    expect(cell).toContain('remove it');
  });
});

describe('Deal screen: basics', () => {
  it('shows the notional with the deal currency beside it and labels the payment currency', () => {
    const deal = read('worst-of-quanto.json');
    const html = renderScreen(deal);
    expect(html).toMatch(
      new RegExp(`data-path="deal\\.notional"[^>]*/><span class="suffix">${deal.currency}</span>`),
    );
    expect(html).toMatch(/<div class="field  +"><label[^>]*>Payment currency<\/label>/);
  });
});
