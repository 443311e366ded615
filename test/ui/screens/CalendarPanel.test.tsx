import { describe, it, expect } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { CalendarPanel, calendarFor, readHolidayText } from '../../../src/ui/screens/CalendarPanel.tsx';
import { DealScreen } from '../../../src/ui/screens/DealScreen.tsx';
import { IssueContext, issuesByField, RawContext, TextField } from '../../../src/ui/components/fields.tsx';
import { AppContext, type AppApi } from '../../../src/ui/state/appContext.ts';
import { checkDeal } from '../../../src/engine/deal/compileDeal.ts';
import type { DealInput } from '../../../src/engine/deal/types.ts';

// The bundled invented deals are only inputs here: the checks are on what the screen shows, not on numbers.
const read = (f: string) =>
  JSON.parse(fs.readFileSync(path.resolve(__dirname, `../../../samples/deals/${f}`), 'utf8')) as DealInput;

function renderPanel(deal: DealInput, raw: Record<string, string> = {}): string {
  const issues = checkDeal(deal).issues;
  return renderToStaticMarkup(
    createElement(
      RawContext.Provider,
      { value: { raw, setRaw: () => {} } },
      createElement(
        IssueContext.Provider,
        { value: issuesByField(issues) },
        createElement(CalendarPanel, { deal, update: () => {}, mark: (p: string) => p }),
      ),
    ),
  );
}

function renderScreen(deal: DealInput): string {
  const app = {
    doc: { deal, settings: { rules: undefined }, raw: {} },
    dispatch: () => {},
    engine: { call: () => new Promise(() => {}) },
    platform: {},
    notify: () => {},
  } as unknown as AppApi;
  return renderToStaticMarkup(createElement(AppContext.Provider, { value: app }, createElement(DealScreen)));
}

describe('holiday text', () => {
  it('reads one date per line, comma-separated dates, and the first column of a CSV with a header', () => {
    expect(readHolidayText('2026-12-25\n\n2027-01-01')).toEqual([
      { date: '2026-12-25', line: 1 },
      { date: '2027-01-01', line: 3 },
    ]);
    expect(readHolidayText('2026-12-25, 2027-01-01;2027-04-02').map((e) => e.date)).toEqual([
      '2026-12-25',
      '2027-01-01',
      '2027-04-02',
    ]);
    const csv = 'date,name\n2026-12-25,Winter break\n"2027-01-01","New year"\r\n';
    expect(readHolidayText(csv)).toEqual([
      { date: '2026-12-25', line: 2 },
      { date: '2027-01-01', line: 3 },
    ]);
  });
  it('keeps a malformed entry so the engine can name it (nothing typed is dropped silently)', () => {
    expect(readHolidayText('2026-12-25\n25.12.2026').map((e) => e.date)).toEqual([
      '2026-12-25',
      '25.12.2026',
    ]);
  });
  it('leaves the calendar out when it equals the default (weekdays, no holidays)', () => {
    expect(calendarFor([], true)).toBeUndefined();
    expect(calendarFor([], false)).toEqual({ weekends: false });
    expect(calendarFor(['2026-12-25'], true)).toEqual({ holidays: ['2026-12-25'] });
  });
});

describe('Deal screen: business days', () => {
  it('shows the engine message for a bad holiday at the list, with its position, line and the fix', () => {
    const deal = read('autocallable-memory.json');
    deal.calendar = { holidays: ['2026-12-25', '2026-13-01'] };
    const html = renderPanel(deal, { 'deal.calendar.holidays': 'date\n2026-12-25\n2026-13-01' });
    expect(html).toMatch(/data-testid="calendar-problems"/);
    expect(html).toMatch(/Holiday 2 \(line 3\): must have a month 01 to 12/);
    expect(html).toMatch(/write it YYYY-MM-DD/);
    // The text stays exactly as typed, header included.
    expect(html).toContain('date\n2026-12-25\n2026-13-01</textarea>');
  });
  it('shows the deal’s own list when the typed text belongs to a deal that was replaced', () => {
    const deal = read('autocallable-memory.json');
    deal.calendar = { holidays: ['2027-01-01'] };
    const html = renderPanel(deal, { 'deal.calendar.holidays': 'date\n2026-12-25' });
    expect(html).toContain('>2027-01-01</textarea>');
    expect(html).not.toContain('2026-12-25</textarea>');
  });
  it('has no message for a valid calendar and says whether the deal uses it', () => {
    const deal = read('autocallable-memory.json');
    deal.calendar = { holidays: ['2026-12-25'], weekends: true };
    const plain = renderPanel(deal);
    expect(plain).not.toMatch(/calendar-problems/);
    expect(plain).toMatch(/changes nothing here/);
    const first = Object.keys(deal.schedules)[0]!;
    deal.schedules[first]!.roll = 'modifiedFollowing';
    expect(renderPanel(deal)).toMatch(/This deal uses it/);
  });
  it('offers a roll convention per schedule, showing the one the deal has', () => {
    const deal = read('autocallable-memory.json');
    const names = Object.keys(deal.schedules);
    deal.schedules[names[0]!]!.roll = 'following';
    const html = renderScreen(deal);
    for (const n of names) expect(html).toContain(`data-path="deal.schedules.${n}.roll"`);
    const sel = new RegExp(
      `data-path="deal\\.schedules\\.${names[0]}\\.roll"[^>]*>.*?<option value="following" selected=""`,
      's',
    );
    expect(html).toMatch(sel);
    expect(html).toMatch(/data-testid="deal-calendar"/);
  });
  it('shows a rolled schedule written in year fractions as a problem at its dates field, naming the item', () => {
    const deal = read('european-call.json');
    const name = Object.keys(deal.schedules)[0]!;
    deal.schedules[name] = { dates: ['2027-01-04', 1], roll: 'following' };
    const issues = checkDeal(deal).issues;
    const p = `deal.schedules.${name}.dates`;
    expect(issues.map((i) => i.field)).toContain(`${p}[1]`);
    const html = renderToStaticMarkup(
      createElement(
        IssueContext.Provider,
        { value: issuesByField(issues) },
        createElement(TextField, {
          label: 'Dates',
          path: p,
          value: '2027-01-04, 1',
          itemIssues: true,
          onChange: () => {},
        }),
      ),
    );
    expect(html).toMatch(
      /item 2: must be an ISO date to be rolled &quot;following&quot;.*remove &quot;roll&quot;/,
    );
    expect(html).toMatch(/aria-invalid="true"/);
  });
});
