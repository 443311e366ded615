import { describe, it, expect } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { rolledDates } from '../../../src/ui/screens/rolledDates.ts';
import { expandSchedule, isoDayNumber, makeBusinessCalendar } from '../../../src/engine/deal/dealDates.ts';
import type { DealInput } from '../../../src/engine/deal/types.ts';

// The bundled invented deal is only an input: the preview must agree with the engine's own rolled schedule.
const deal = JSON.parse(
  fs.readFileSync(path.resolve(__dirname, '../../../samples/deals/autocallable-memory.json'), 'utf8'),
) as DealInput;

describe('rolled-date preview', () => {
  it('is absent for a schedule kept as written', () => {
    expect(rolledDates(deal, 'quarterly')).toBeNull();
  });
  it('moves only non-business days, onto business days, and agrees with the engine’s rolled schedule', () => {
    for (const roll of ['following', 'modifiedFollowing', 'preceding'] as const) {
      const d = structuredClone(deal);
      d.calendar = { holidays: ['2027-02-23'] };
      d.schedules.quarterly = { ...d.schedules.quarterly!, roll };
      const moved = rolledDates(d, 'quarterly')!;
      expect(moved.length, roll).toBeGreaterThan(0);
      const cal = makeBusinessCalendar('deal.calendar', d.calendar);
      for (const m of moved) {
        expect(cal.isBusinessDay(isoDayNumber('from', m.from)), `${roll}: ${m.from}`).toBe(false);
        expect(cal.isBusinessDay(isoDayNumber('to', m.to)), `${roll}: ${m.to}`).toBe(true);
      }
      // The listed holiday falls on a schedule date and is moved.
      expect(moved.map((m) => m.from)).toContain('2027-02-23');
      const v = isoDayNumber('v', d.valuationDate!);
      const engine = expandSchedule('s', d.schedules.quarterly!, v, true, cal).map(
        (t) => v + Math.round(t * 365),
      );
      for (const m of moved) expect(engine, `${roll}: ${m.to}`).toContain(isoDayNumber('to', m.to));
      if (roll === 'following') for (const m of moved) expect(m.to > m.from).toBe(true);
      if (roll === 'preceding') for (const m of moved) expect(m.to < m.from).toBe(true);
    }
  });
  it('rolls a list of ISO dates and gives no preview for year fractions (the engine names that at the field)', () => {
    const d = structuredClone(deal);
    d.calendar = { holidays: ['2029-11-23'] };
    d.schedules.final = { dates: ['2029-11-23'], roll: 'following' };
    const moved = rolledDates(d, 'final')!;
    expect(moved).toHaveLength(1);
    expect(moved[0]!.from).toBe('2029-11-23');
    d.schedules.final = { dates: [3], roll: 'following' };
    expect(rolledDates(d, 'final')).toBeNull();
  });
});
