/**
 * Which dates of a schedule its roll convention moves, and where to: the schedule expanded as written, then each
 * date moved by the engine's own roll on the deal calendar. For the schedule editor's preview only; problems in
 * the schedule are reported by the engine's check at their fields, so here they just mean "no preview".
 */
import { expandSchedule, isoDayNumber, makeBusinessCalendar, rollDay } from '../../engine/deal/dealDates.ts';
import { formatIsoDate } from '../../engine/market/dates.ts';
import type { DealInput } from '../../engine/deal/types.ts';

/** A schedule date that is not a business day and the date it is moved to. */
export interface RolledDate {
  from: string;
  to: string;
}

/**
 * The moved dates of schedule `id` (empty when none moves); null when the schedule does not roll or cannot be
 * expanded yet (its fields have errors, or it has no ISO dates to roll).
 */
export function rolledDates(deal: DealInput, id: string): RolledDate[] | null {
  const s = deal.schedules?.[id];
  const roll = s?.roll ?? 'none';
  if (!s || roll === 'none') return null;
  try {
    const cal = makeBusinessCalendar('deal.calendar', deal.calendar);
    let days: number[];
    if ('dates' in s) {
      if (s.dates.some((d) => typeof d !== 'string')) return null;
      days = (s.dates as string[]).map((d, i) => isoDayNumber(`deal.schedules.${id}.dates[${i}]`, d));
    } else {
      if (!deal.valuationDate) return null;
      const v = isoDayNumber('deal.valuationDate', deal.valuationDate);
      // Expanded as written (year fractions ACT/365F from the valuation date, whole days back).
      days = expandSchedule(`deal.schedules.${id}`, { ...s, roll: 'none' }, v, true, cal).map(
        (t) => v + Math.round(t * 365),
      );
    }
    const out: RolledDate[] = [];
    for (const d of days) {
      const to = rollDay(d, roll, cal);
      if (to !== d) out.push({ from: formatIsoDate(d), to: formatIsoDate(to) });
    }
    return out;
  } catch {
    return null;
  }
}
