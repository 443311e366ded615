import { describe, it, expect } from 'vitest';
import {
  civilFromDays,
  daysBetween,
  daysFromCivil,
  formatIsoDate,
  parseIsoDate,
  yearFraction,
} from '../../../src/engine/market/dates.ts';

describe('dates', () => {
  // Reference library: ECMAScript Date.UTC (ECMA-262, §21.4.1 "Time Values and Time Range"), proleptic Gregorian.
  it('agrees with Date.UTC day numbers from 1600 to 2400 (every 37 days)', () => {
    for (let d = Date.UTC(1600, 0, 1) / 864e5; d < Date.UTC(2400, 0, 1) / 864e5; d += 37) {
      const js = new Date(d * 864e5);
      const c = civilFromDays(d);
      expect([c.year, c.month, c.day]).toEqual([js.getUTCFullYear(), js.getUTCMonth() + 1, js.getUTCDate()]);
      expect(daysFromCivil(c.year, c.month, c.day)).toBe(d);
    }
  });

  it('parses ISO dates and round-trips them', () => {
    expect(parseIsoDate('2000-01-01').dayNumber).toBe(10957); // 946684800 s / 86400, common practice
    expect(formatIsoDate(parseIsoDate('2026-11-23').dayNumber)).toBe('2026-11-23');
    expect(parseIsoDate('2024-02-29').day).toBe(29);
  });

  it('rejects malformed or impossible dates naming the field', () => {
    expect(() => parseIsoDate('2026-13-01', 'deal.maturity')).toThrowError(
      /deal.maturity must have a month 01 to 12/,
    );
    expect(() => parseIsoDate('2025-02-29', 'date')).toThrowError(/day 01 to 28/);
    expect(() => parseIsoDate('23/11/2026', 'date')).toThrowError(/must be an ISO date YYYY-MM-DD/);
    expect(() => parseIsoDate(undefined as unknown as string, 'date')).toThrowError(/ISO date/);
  });

  it('gives ACT/365F year fractions: actual days / 365 (ISDA 2006 §4.16(d))', () => {
    expect(yearFraction('2026-01-01', '2027-01-01')).toBe(1);
    expect(yearFraction('2027-01-01', '2028-01-01')).toBe(1);
    expect(yearFraction('2028-01-01', '2029-01-01')).toBe(366 / 365); // leap year
    expect(yearFraction('2026-11-23', '2026-11-23')).toBe(0);
    expect(yearFraction('2026-11-23', '2026-05-23')).toBe(-184 / 365);
    expect(daysBetween('2026-02-28', '2026-03-01')).toBe(1);
  });
});
