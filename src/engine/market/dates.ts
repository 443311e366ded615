/**
 * Calendar dates as ISO `YYYY-MM-DD` strings and the ACT/365F year fraction.
 * Day numbers use the proleptic Gregorian calendar, computed arithmetically (no time zones):
 * H. Hinnant, "chrono-Compatible Low-Level Date Algorithms" (2013), `days_from_civil`.
 */
import { fail } from '../errors.ts';

/** A parsed calendar date; `dayNumber` counts days since 1970-01-01. */
export interface CalendarDate {
  year: number;
  month: number;
  day: number;
  dayNumber: number;
}

function isLeap(y: number): boolean {
  return (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
}

/** Days in a month of the Gregorian calendar (common practice). */
export function daysInMonth(year: number, month: number): number {
  return [31, isLeap(year) ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1]!;
}

/** Days since 1970-01-01 of a Gregorian date (Hinnant 2013, days_from_civil). */
export function daysFromCivil(year: number, month: number, day: number): number {
  const y = month <= 2 ? year - 1 : year;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const mp = (month + 9) % 12;
  const doy = Math.floor((153 * mp + 2) / 5) + day - 1;
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  return era * 146097 + doe - 719468;
}

/** Inverse of {@link daysFromCivil} (Hinnant 2013, civil_from_days). */
export function civilFromDays(dayNumber: number): { year: number; month: number; day: number } {
  const z = dayNumber + 719468;
  const era = Math.floor(z / 146097);
  const doe = z - era * 146097;
  const yoe = Math.floor(
    (doe - Math.floor(doe / 1460) + Math.floor(doe / 36524) - Math.floor(doe / 146096)) / 365,
  );
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100));
  const mp = Math.floor((5 * doy + 2) / 153);
  const day = doy - Math.floor((153 * mp + 2) / 5) + 1;
  const month = mp < 10 ? mp + 3 : mp - 9;
  return { year: yoe + era * 400 + (month <= 2 ? 1 : 0), month, day };
}

/** Parses an ISO date `YYYY-MM-DD`; a bad string or an impossible date throws EngineError naming `field`. */
export function parseIsoDate(iso: string, field = 'date'): CalendarDate {
  const m = typeof iso === 'string' ? /^(\d{4})-(\d{2})-(\d{2})$/.exec(iso) : null;
  if (!m)
    fail('E_DATE_FORMAT', field, 'must be an ISO date YYYY-MM-DD', iso, 'write the date as e.g. 2026-11-23');
  const year = Number(m[1]);
  const month = Number(m[2]);
  const day = Number(m[3]);
  if (month < 1 || month > 12) fail('E_DATE_MONTH', field, 'must have a month 01 to 12', iso);
  if (day < 1 || day > daysInMonth(year, month))
    fail('E_DATE_DAY', field, `must have a day 01 to ${daysInMonth(year, month)} for that month`, iso);
  return { year, month, day, dayNumber: daysFromCivil(year, month, day) };
}

/** Formats a day number (days since 1970-01-01) as `YYYY-MM-DD`. */
export function formatIsoDate(dayNumber: number): string {
  const { year, month, day } = civilFromDays(dayNumber);
  return `${String(year).padStart(4, '0')}-${String(month).padStart(2, '0')}-${String(day).padStart(2, '0')}`;
}

/** Actual days from `isoFrom` to `isoTo` (negative when `isoTo` is earlier). */
export function daysBetween(isoFrom: string, isoTo: string): number {
  return parseIsoDate(isoTo, 'to').dayNumber - parseIsoDate(isoFrom, 'from').dayNumber;
}

/** ACT/365F year fraction: actual days / 365 (ISDA 2006 Definitions, §4.16(d), "Actual/365 (Fixed)"; common practice). */
export function yearFraction(isoFrom: string, isoTo: string): number {
  return daysBetween(isoFrom, isoTo) / 365;
}
