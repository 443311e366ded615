import { describe, it, expect } from 'vitest';
import { expandSchedule, makeBusinessCalendar } from '../../../src/engine/deal/dealDates.ts';
import { checkDeal } from '../../../src/engine/deal/compileDeal.ts';
import { parseIsoDate } from '../../../src/engine/market/dates.ts';
import type { DealInput, ScheduleInput } from '../../../src/engine/deal/types.ts';

// Business-day conventions as in the ISDA 2006 Definitions, Sec. 4.12 (section number from memory): following,
// modified following (next business day unless it falls in the next month, then the previous one), preceding.
// Weekdays of the dates below are calendar facts (checked with Python's datetime module): 2026-11-23 Mon,
// 2027-05-23 Sun, 2026-02-28 Sat, 2026-05-31 Sun, 2026-10-31 Sat, 2026-12-25 Fri, 2026-11-28 Sat.
const VAL = '2026-11-23';
const day = (iso: string) => parseIsoDate(iso).dayNumber;
const yf = (iso: string) => (day(iso) - day(VAL)) / 365;
const expand = (s: ScheduleInput, calendar?: Parameters<typeof makeBusinessCalendar>[1]) =>
  expandSchedule('deal.schedules.s', s, day(VAL), false, makeBusinessCalendar('deal.calendar', calendar));

describe('schedules rolled to business days', () => {
  it('without a roll the dates stay as written, weekends included (the behaviour of older deal files)', () => {
    expect(expand({ start: VAL, end: '2027-11-23', every: '3M' })).toEqual(
      ['2027-02-23', '2027-05-23', '2027-08-23', '2027-11-23'].map(yf),
    );
  });

  it('following moves the Sunday 2027-05-23 to Monday 2027-05-24 and leaves business days alone', () => {
    expect(expand({ start: VAL, end: '2027-11-23', every: '3M', roll: 'following' })).toEqual(
      ['2027-02-23', '2027-05-24', '2027-08-23', '2027-11-23'].map(yf),
    );
  });

  it('modified following stays in the month at month ends; following and preceding as defined', () => {
    const dates = ['2026-12-31', '2027-02-28', '2027-05-31', '2027-10-31'];
    // 2026-12-31 Thu (kept); 2027-02-28 Sun → Mon 03-01 is next month → Fri 02-26; 2027-05-31 Mon (kept);
    // 2027-10-31 Sun → Mon 11-01 is next month → Fri 10-29.
    expect(expand({ dates, roll: 'modifiedFollowing' })).toEqual(
      ['2026-12-31', '2027-02-26', '2027-05-31', '2027-10-29'].map(yf),
    );
    expect(expand({ dates, roll: 'following' })).toEqual(
      ['2026-12-31', '2027-03-01', '2027-05-31', '2027-11-01'].map(yf),
    );
    expect(expand({ dates, roll: 'preceding' })).toEqual(
      ['2026-12-31', '2027-02-26', '2027-05-31', '2027-10-29'].map(yf),
    );
  });

  it('holidays of the deal calendar are skipped by the roll and by business-day steps', () => {
    const cal = { holidays: ['2026-12-25', '2026-12-28'] };
    // Fri 12-25 holiday, Sat, Sun, Mon 12-28 holiday → Tue 12-29.
    expect(expand({ dates: ['2026-12-25'], roll: 'following' }, cal)).toEqual([yf('2026-12-29')]);
    // 1B from Wed 12-23: Thu 12-24, (12-25 and 12-28 holidays, weekend), Tue 12-29, Wed 12-30, Thu 12-31.
    expect(expand({ start: '2026-12-23', end: '2026-12-31', every: '1B' }, cal)).toEqual(
      ['2026-12-24', '2026-12-29', '2026-12-30', '2026-12-31'].map(yf),
    );
    // Without the calendar, 1B steps are weekdays (as before).
    expect(expand({ start: '2026-12-23', end: '2026-12-31', every: '1B' })).toEqual(
      ['2026-12-24', '2026-12-25', '2026-12-28', '2026-12-29', '2026-12-30', '2026-12-31'].map(yf),
    );
  });

  it('dates rolled onto one business day observe once (a daily schedule over a weekend)', () => {
    // 1D from Fri 11-27: Sat 11-28 and Sun 11-29 roll to Mon 11-30, which is also a date of its own.
    expect(expand({ start: '2026-11-27', end: '2026-11-30', every: '1D', roll: 'following' })).toEqual([
      yf('2026-11-30'),
    ]);
  });

  it('refuses a roll on year fractions and a holiday that is not a date, naming the field', () => {
    expect(() => expand({ dates: [0.5, 1], roll: 'following' })).toThrow(
      /deal\.schedules\.s\.dates\[0\].*ISO date/,
    );
    expect(() => expand({ start: 0, end: 1, every: '3M', roll: 'preceding' })).toThrow(
      /deal\.schedules\.s\.start.*ISO date/,
    );
    expect(() => makeBusinessCalendar('deal.calendar', { holidays: ['2026-13-01'] })).toThrow(
      /deal\.calendar\.holidays\[0\]/,
    );
  });

  it('a deal file with a calendar and rolled schedules compiles, and its grid holds the rolled dates', () => {
    const deal: DealInput = {
      format: 'factor-triage/deal@1',
      name: 'rolled coupons',
      valuationDate: VAL,
      notional: 1,
      currency: 'DOM',
      underlyings: { ALDR: { kind: 'equity', currency: 'DOM', initialLevel: 100 } },
      schedules: { q: { start: VAL, end: '2027-11-23', every: '3M', roll: 'modifiedFollowing' } },
      calendar: { holidays: ['2027-08-23'] },
      events: [{ on: 'q', pay: { amount: '0.01 * dt' } }],
    };
    const r = checkDeal(deal);
    expect(r.issues.filter((i) => i.severity === 'error')).toEqual([]);
    // 2027-05-23 Sun → Mon 05-24; Mon 2027-08-23 is a holiday → Tue 08-24.
    expect(r.compiled!.schedules.q).toEqual(['2027-02-23', '2027-05-24', '2027-08-24', '2027-11-23'].map(yf));
    const bad = checkDeal({ ...deal, calendar: { holidays: ['soon'] } });
    expect(bad.issues.map((i) => i.field)).toContain('deal.calendar.holidays[0]');
  });
});
