/**
 * The deal's business days: whether Saturdays and Sundays count, and a holiday list typed or pasted as text
 * (one date per line, comma separated, or a CSV whose first column holds the dates). The text stays as the user
 * typed it; the engine's message for a bad date shows under the list with the line it came from.
 */
import { useContext, useId } from 'react';
import type { CalendarInput, DealInput } from '../../engine/deal/types.ts';
import { CheckField, IssueContext, RawContext } from '../components/fields.tsx';

/** One date read from the holiday text, with the 1-based line it stands on. */
export interface HolidayEntry {
  date: string;
  line: number;
}

const STARTS_WITH_DIGIT = /^\d/;

/**
 * Reads a holiday list from text: each line is either dates separated by commas, semicolons or tabs, or a CSV row
 * whose first cell is the date (later cells, e.g. a holiday's name, are notes and not read). A first line whose
 * first cell has no digit is a header and is skipped. Nothing is validated here: the engine checks each date.
 */
export function readHolidayText(text: string): HolidayEntry[] {
  const out: HolidayEntry[] = [];
  const lines = text.split(/\r?\n/);
  lines.forEach((raw, i) => {
    const cells = raw
      .split(/[,;\t]/)
      .map((c) => c.trim().replace(/^"(.*)"$/, '$1'))
      .filter((c) => c !== '');
    if (cells.length === 0) return;
    if (i === 0 && !/\d/.test(cells[0]!)) return;
    const picked = cells.every((c) => STARTS_WITH_DIGIT.test(c)) ? cells : [cells[0]!];
    for (const c of picked) out.push({ date: c, line: i + 1 });
  });
  return out;
}

/** The `calendar` section for the given settings; undefined when it equals the default (weekdays only). */
export function calendarFor(holidays: string[], weekends: boolean): CalendarInput | undefined {
  if (holidays.length === 0 && weekends) return undefined;
  return { ...(weekends ? {} : { weekends: false }), ...(holidays.length ? { holidays } : {}) };
}

const HOLIDAYS_PATH = 'deal.calendar.holidays';

export function CalendarPanel(props: {
  deal: DealInput;
  update(f: (d: DealInput) => void): void;
  mark(p: string): string;
}) {
  const { deal, update, mark } = props;
  const { raw, setRaw } = useContext(RawContext);
  const byField = useContext(IssueContext);
  const areaId = useId();
  const msgId = useId();
  const cal = deal.calendar;
  const weekends = cal?.weekends !== false;
  const holidays = cal?.holidays ?? [];
  // The typed text (header, names, layout) is shown while it still reads as the deal's list; a deal replaced
  // underneath (a template, an opened file) shows its own list instead.
  const typed = raw[HOLIDAYS_PATH];
  const typedList = typed === undefined ? null : readHolidayText(typed).map((e) => e.date);
  const text =
    typed !== undefined &&
    typedList!.length === holidays.length &&
    typedList!.every((d, i) => d === holidays[i])
      ? typed
      : holidays.join('\n');
  const entries = readHolidayText(text);
  const usesRoll = Object.values(deal.schedules ?? {}).some((s) => (s.roll ?? 'none') !== 'none');
  const usesBusinessSteps = Object.values(deal.schedules ?? {}).some(
    (s) => 'every' in s && /B$/i.test(s.every.trim()),
  );
  // Engine issues anywhere in the calendar section, with the line of the date they name.
  const problems: { text: string; severity: string }[] = [];
  for (const [field, list] of byField) {
    if (
      field !== 'deal.calendar' &&
      !field.startsWith('deal.calendar.') &&
      !field.startsWith('deal.calendar[')
    )
      continue;
    mark(field);
    const m = /^deal\.calendar\.holidays\[(\d+)\]$/.exec(field);
    for (const i of list) {
      const msg = i.message.startsWith(field + ' ') ? i.message.slice(field.length + 1) : i.message;
      const where = m
        ? `Holiday ${Number(m[1]) + 1}${entries[Number(m[1])] ? ` (line ${entries[Number(m[1])]!.line})` : ''}`
        : field === 'deal.calendar.weekends'
          ? 'Weekends'
          : 'Calendar';
      problems.push({
        text: `${where}: ${msg}${m ? ' — write it YYYY-MM-DD, e.g. 2026-12-25' : ''}`,
        severity: i.severity,
      });
    }
  }
  mark(HOLIDAYS_PATH);
  mark('deal.calendar.weekends');
  const bad = problems.some((p) => p.severity === 'error');
  const setHolidays = (t: string): void => {
    setRaw(HOLIDAYS_PATH, t);
    const list = readHolidayText(t).map((e) => e.date);
    update((d) => {
      const next = calendarFor(list, d.calendar?.weekends !== false);
      if (next) d.calendar = next;
      else delete d.calendar;
    });
  };
  return (
    <section className="panel" data-testid="deal-calendar">
      <h2>Business days</h2>
      <p className="hint">
        Used by schedules that roll dates off non-business days and by steps counted in business days (e.g.
        5B).{' '}
        {usesRoll || usesBusinessSteps
          ? 'This deal uses it.'
          : 'No schedule of this deal rolls its dates or steps in business days yet, so it changes nothing here.'}
      </p>
      <CheckField
        label="Saturdays and Sundays are not business days"
        path="deal.calendar.weekends"
        value={weekends}
        onChange={(v) =>
          update((d) => {
            const next = calendarFor(d.calendar?.holidays ?? [], v);
            if (next) d.calendar = next;
            else delete d.calendar;
          })
        }
      />
      <div className={`field wide ${bad ? 'has-error' : ''}`}>
        <label htmlFor={areaId}>
          Holidays ({entries.length} {entries.length === 1 ? 'date' : 'dates'}) — one per line or comma
          separated, YYYY-MM-DD; a pasted CSV's first column is read
        </label>
        <textarea
          id={areaId}
          className="mono holidays"
          rows={Math.min(8, Math.max(3, text.split('\n').length + 1))}
          spellCheck={false}
          value={text}
          placeholder="e.g. 2026-12-25 (none yet)"
          aria-invalid={bad}
          aria-describedby={bad ? msgId : undefined}
          data-path={HOLIDAYS_PATH}
          onChange={(e) => setHolidays(e.target.value)}
        />
        {problems.length > 0 && (
          <div className="field-msg" id={msgId} role="alert" data-testid="calendar-problems">
            {problems.map((p, k) => (
              <div key={k} className={p.severity === 'warning' ? 'msg-warn' : 'msg-error'}>
                {p.text}
              </div>
            ))}
          </div>
        )}
      </div>
    </section>
  );
}
