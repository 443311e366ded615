/**
 * Dates inside a deal file: ISO `YYYY-MM-DD` text or year fractions, turned into year fractions ACT/365F from
 * the valuation date (ACT/365F: actual days / 365, ISDA 2006 Definitions §4.16(d)), and schedules rolled by
 * calendar days, business days, weeks, months or years, then moved off non-business days by the schedule's roll
 * convention (ISDA 2006 Definitions, Sec. 4.12, from memory) on the deal calendar (weekends and listed holidays).
 */
import { fail } from '../errors.ts';
import { civilFromDays, daysFromCivil, daysInMonth, formatIsoDate, parseIsoDate } from '../market/dates.ts';
import type { CalendarInput, DateInput, RollConvention, ScheduleInput } from './types.ts';

/** Day number (days since 1970-01-01) of an ISO date; fails naming `field` when it is not a real date. */
export function isoDayNumber(field: string, text: string): number {
  return parseIsoDate(text, field).dayNumber;
}

/**
 * Converts a date input to a year fraction (ACT/365F) from the valuation date (a day number, or null if absent).
 * With `allowPast`, an ISO date before the valuation date gives a negative year fraction (a deal under way).
 */
export function toYearFraction(
  field: string,
  value: DateInput,
  valuationDay: number | null,
  allowPast = false,
): number {
  if (typeof value === 'number') {
    if (!Number.isFinite(value) || value < 0)
      fail('E_BAD_DATE', field, 'must be a year fraction >= 0', value);
    return value;
  }
  const day = isoDayNumber(field, value);
  if (valuationDay === null)
    fail(
      'E_NO_VALUATION_DATE',
      field,
      'is an ISO date, which needs the deal valuationDate',
      value,
      'add "valuationDate": "YYYY-MM-DD"',
    );
  const t = (day - valuationDay) / 365;
  if (t < 0 && !allowPast)
    fail('E_DATE_BEFORE_VALUATION', field, 'must not be before the valuation date', value);
  return t;
}

const STEP = /^([1-9]\d{0,3})([DBWMY])$/;

/** Adds months to a day number keeping the anchor's day of month, clipped to the month's end (common practice). */
function addMonths(day: number, months: number, anchorDom: number): number {
  const c = civilFromDays(day);
  const m0 = c.month - 1 + months;
  const year = c.year + Math.floor(m0 / 12);
  const month = (((m0 % 12) + 12) % 12) + 1;
  return daysFromCivil(year, month, Math.min(anchorDom, daysInMonth(year, month)));
}

/** Day of the week of a day number, 0 = Sunday (1970-01-01 was a Thursday). */
const weekday = (day: number): number => (((day + 4) % 7) + 7) % 7;

/** The deal's business days. */
export interface BusinessCalendar {
  isBusinessDay(day: number): boolean;
}

/** Weekdays only: the calendar of a deal without a `calendar` section. */
export const WEEKDAYS: BusinessCalendar = {
  isBusinessDay: (day) => {
    const wd = weekday(day);
    return wd !== 0 && wd !== 6;
  },
};

/** The deal calendar from its `calendar` section (`field` names it in errors); weekdays only when absent. */
export function makeBusinessCalendar(field: string, c: CalendarInput | undefined): BusinessCalendar {
  if (!c) return WEEKDAYS;
  const holidays = new Set((c.holidays ?? []).map((h, i) => isoDayNumber(`${field}.holidays[${i}]`, h)));
  const weekends = c.weekends !== false;
  if (!weekends && holidays.size === 0) return { isBusinessDay: () => true };
  return {
    isBusinessDay: (day) => !holidays.has(day) && (!weekends || WEEKDAYS.isBusinessDay(day)),
  };
}

/** Moves a day off non-business days by `roll` (ISDA 2006 Definitions, Sec. 4.12, from memory). */
export function rollDay(day: number, roll: RollConvention, cal: BusinessCalendar): number {
  if (roll === 'none' || cal.isBusinessDay(day)) return day;
  const step = (d: number, by: 1 | -1) => {
    let x = d;
    // A calendar without any business day in a year is refused rather than looped over.
    for (let i = 0; i < 366; i++) {
      x += by;
      if (cal.isBusinessDay(x)) return x;
    }
    fail('E_NO_BUSINESS_DAY', 'deal.calendar', 'has no business day within a year of a schedule date', day);
  };
  if (roll === 'following') return step(day, 1);
  if (roll === 'preceding') return step(day, -1);
  const f = step(day, 1);
  return civilFromDays(f).month === civilFromDays(day).month ? f : step(day, -1);
}

/**
 * Expands a schedule to sorted, distinct year fractions. Month and year steps roll from the start date and keep its
 * day of month (clipped to the month's end); with year-fraction inputs a month is 1/12 year and a day 1/365. With
 * `allowPast`, dates before the valuation date are kept as negative year fractions.
 */
export function expandSchedule(
  field: string,
  s: ScheduleInput,
  valuationDay: number | null,
  allowPast = false,
  calendar: BusinessCalendar = WEEKDAYS,
): number[] {
  const roll = s.roll ?? 'none';
  let times: number[];
  if ('dates' in s) {
    if (roll !== 'none') {
      const bad = s.dates.findIndex((d) => typeof d === 'number');
      if (bad >= 0)
        fail(
          'E_ROLL_NEEDS_DATES',
          `${field}.dates[${bad}]`,
          `must be an ISO date to be rolled "${roll}" (a year fraction has no weekday)`,
          s.dates[bad],
          'write YYYY-MM-DD dates, or remove "roll"',
        );
      times = s.dates.map((d, i) => {
        const rolled = rollDay(isoDayNumber(`${field}.dates[${i}]`, d as string), roll, calendar);
        return toYearFraction(`${field}.dates[${i}]`, formatIsoDate(rolled), valuationDay, allowPast);
      });
    } else times = s.dates.map((d, i) => toYearFraction(`${field}.dates[${i}]`, d, valuationDay, allowPast));
  } else {
    const m = STEP.exec(s.every);
    if (!m)
      fail('E_BAD_STEP', `${field}.every`, 'must be a count and a unit D, B, W, M or Y (e.g. 3M)', s.every);
    const n = Number(m[1]);
    const unit = m[2]!;
    const t0 = toYearFraction(`${field}.start`, s.start, valuationDay, allowPast);
    const t1 = toYearFraction(`${field}.end`, s.end, valuationDay, allowPast);
    if (!(t1 > t0)) fail('E_BAD_SCHEDULE', `${field}.end`, 'must be after the start', s.end);
    times = [];
    const maxDates = 20_000;
    if (typeof s.start === 'string' && typeof s.end === 'string' && valuationDay !== null) {
      const d0 = isoDayNumber(`${field}.start`, s.start);
      const d1 = isoDayNumber(`${field}.end`, s.end);
      const dom = civilFromDays(d0).day;
      let bday = d0;
      for (let i = 1; times.length < maxDates; i++) {
        let d: number;
        if (unit === 'D') d = d0 + n * i;
        else if (unit === 'W') d = d0 + 7 * n * i;
        else if (unit === 'M') d = addMonths(d0, n * i, dom);
        else if (unit === 'Y') d = addMonths(d0, 12 * n * i, dom);
        else {
          // business days: step n business days of the deal calendar (Monday–Friday without a calendar)
          let k = 0;
          while (k < n) {
            bday += 1;
            if (calendar.isBusinessDay(bday)) k++;
          }
          d = bday;
        }
        if (d > d1) break;
        const rolled = rollDay(d, roll, calendar);
        const t = (rolled - valuationDay) / 365;
        // Two dates rolled onto one business day (e.g. a daily schedule over a weekend) observe once.
        if (times.length === 0 || t > times[times.length - 1]!) times.push(t);
      }
    } else {
      if (roll !== 'none')
        fail(
          'E_ROLL_NEEDS_DATES',
          `${field}.start`,
          `must be an ISO date, with the end, to be rolled "${roll}" (a year fraction has no weekday)`,
          s.start,
          'write YYYY-MM-DD dates and a valuationDate, or remove "roll"',
        );
      const step =
        unit === 'D' || unit === 'B' ? n / 365 : unit === 'W' ? (7 * n) / 365 : unit === 'M' ? n / 12 : n;
      for (let i = 1; times.length < maxDates; i++) {
        const t = t0 + step * i;
        if (t > t1 + 1e-12) break;
        times.push(t);
      }
    }
    if (times.length >= maxDates)
      fail('E_SCHEDULE_TOO_LONG', field, `must have fewer than ${maxDates} dates`, s.every);
    if (times.length === 0) fail('E_BAD_SCHEDULE', field, 'has no date between start and end', s.every);
  }
  for (let i = 1; i < times.length; i++)
    if (!(times[i]! > times[i - 1]!))
      fail('E_BAD_SCHEDULE', `${field}.dates[${i}]`, 'must be after the previous date', times[i]);
  return times;
}
