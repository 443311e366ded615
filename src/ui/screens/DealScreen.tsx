/**
 * Deal: pick a template or open a deal file, then edit what is paid — underlyings, rates, parameters, state,
 * schedules, events and exercise rights. Every change is checked by the engine as you type; a problem shows
 * beside its field (for a payoff expression, under the very characters at fault).
 */
import { useContext, useEffect, useId, useMemo, useRef, useState } from 'react';
import type {
  CompiledHistory,
  DealInput,
  EventInput,
  HistoryNeed,
  PaymentInput,
  RollConvention,
  ScheduleInput,
  Underlying,
} from '../../engine/deal/types.ts';
import type { DealReview } from '../../engine/api/index.ts';
import { errorText, useApp } from '../state/appContext.ts';
import { DEAL_TEMPLATES } from '../state/samples.ts';
import { VerdictMark } from '../components/verdict.tsx';
import { formShapeProblem } from '../state/dealShape.ts';
import { ScreenBoundary } from '../components/ScreenBoundary.tsx';
import { CalendarPanel } from './CalendarPanel.tsx';
import { rolledDates, type RolledDate } from './rolledDates.ts';

const FACTOR_SHORT: Record<string, string> = {
  stochVol: 'Stochastic vol',
  domesticRate: 'Domestic rate',
  foreignRate: 'Foreign rate',
};
import {
  CheckField,
  ExpressionField,
  IssueContext,
  issuesByField,
  NumberField,
  RawContext,
  SelectField,
  TextField,
  type ExpressionMark,
} from '../components/fields.tsx';

type Mutator = (d: DealInput) => void;

function asList<T>(v: T | T[] | undefined): T[] {
  return v === undefined ? [] : Array.isArray(v) ? v : [v];
}

/** Rebuilds a record with one key renamed, keeping the order of the others. */
function renameKey<T>(rec: Record<string, T>, from: string, to: string): Record<string, T> {
  const out: Record<string, T> = {};
  for (const [k, v] of Object.entries(rec)) out[k === from ? to : k] = v;
  return out;
}

function freshName(rec: Record<string, unknown> | undefined, stem: string): string {
  let i = 1;
  while (rec && Object.prototype.hasOwnProperty.call(rec, `${stem}${i}`)) i++;
  return `${stem}${i}`;
}

/** A name (record key) editor: a clash or an empty name is kept as typed with a message, never dropped. */
function KeyField(props: {
  label: string;
  path: string;
  name: string;
  taken: string[];
  onRename(to: string): void;
}) {
  const { raw, setRaw } = useContext(RawContext);
  const text = raw[props.path] ?? props.name;
  const clash = text !== props.name && props.taken.includes(text);
  const empty = text.trim() === '';
  const local = empty
    ? `${props.label} must not be empty`
    : clash
      ? `${props.label} "${text}" is already used in this deal`
      : null;
  return (
    <TextField
      label={props.label}
      path={props.path}
      value={text}
      compact
      check={() => local}
      onChange={(v) => {
        if (v.trim() !== '' && (v === props.name || !props.taken.includes(v))) {
          setRaw(props.path, null);
          props.onRename(v);
        } else setRaw(props.path, v);
      }}
    />
  );
}

function stripField(message: string, field: string): string {
  return message.startsWith(field + ', ')
    ? message.slice(field.length + 2)
    : message.startsWith(field + ' ')
      ? message.slice(field.length + 1)
      : message;
}

export function DealScreen() {
  const { doc, dispatch, engine, platform, notify } = useApp();
  const deal = doc.deal;
  const [review, setReview] = useState<DealReview | null>(null);
  const [checking, setChecking] = useState(false);
  const [engineError, setEngineError] = useState<string | null>(null);
  const seq = useRef(0);

  useEffect(() => {
    const my = ++seq.current;
    const ac = new AbortController();
    setChecking(true);
    const t = setTimeout(() => {
      engine.call('deal.check', { deal, rules: doc.settings.rules }, { signal: ac.signal }).then(
        (r) => {
          if (my !== seq.current) return;
          setReview(r);
          setEngineError(null);
          setChecking(false);
        },
        (e) => {
          if (my !== seq.current) return;
          if ((e as { code?: string }).code !== 'E_CANCELLED') setEngineError(errorText(e));
          setChecking(false);
        },
      );
    }, 120);
    return () => {
      clearTimeout(t);
      ac.abort();
    };
  }, [deal, engine, doc.settings.rules]);

  const update = (f: Mutator): void => {
    const d = structuredClone(deal);
    f(d);
    dispatch({ type: 'setDeal', deal: d });
  };

  const issues = review?.issues ?? [];
  const byField = useMemo(() => issuesByField(issues), [issues]);
  const marks = useMemo(() => {
    const m = new Map<string, ExpressionMark[]>();
    for (const e of review?.expressionErrors ?? [])
      m.set(e.field, [
        ...(m.get(e.field) ?? []),
        { start: e.start, end: e.end, message: stripField(e.message, e.field) },
      ]);
    return m;
  }, [review]);
  const errors = issues.filter((i) => i.severity === 'error');

  const openDealFile = async (): Promise<void> => {
    try {
      const f = await platform.pickFile('deal');
      if (!f) return;
      let json: unknown;
      try {
        json = JSON.parse(f.text);
      } catch (e) {
        notify(
          'error',
          `${f.name} is not valid JSON: ${errorText(e)}. Open a deal file saved by this tool, or paste its text into the Deal file (JSON) panel below to see where it breaks.`,
        );
        return;
      }
      if (!json || typeof json !== 'object' || Array.isArray(json)) {
        notify(
          'error',
          `${f.name} does not hold a deal (a JSON object with "format": "factor-triage/deal@1").`,
        );
        return;
      }
      dispatch({ type: 'setDeal', deal: json as DealInput });
      notify('info', `Loaded ${f.name}; problems, if any, are shown beside their fields.`);
    } catch (e) {
      notify('error', `Could not open the file: ${errorText(e)}`);
    }
  };

  const saveDealFile = async (): Promise<void> => {
    try {
      const r = await platform.saveFile({
        kind: 'deal',
        suggestedName: (deal.name || 'deal').replace(/[^A-Za-z0-9 _.-]+/g, ' ').trim() || 'deal',
        text: JSON.stringify(deal, null, 2) + '\n',
        handle: null,
      });
      if (r) notify('success', `Saved ${r.name}.`);
    } catch (e) {
      notify('error', `The deal was not saved: ${errorText(e)}`);
    }
  };

  const names = [
    ...Object.keys(deal.underlyings ?? {}),
    ...Object.keys(deal.parameters ?? {}),
    ...Object.keys(deal.state ?? {}),
    ...Object.keys(deal.schedules ?? {}),
    ...(Array.isArray(deal.rates) ? deal.rates : []),
  ];
  const schedules = Object.keys(deal.schedules ?? {});
  const shownFields = new Set<string>();
  const mark = (p: string): string => {
    shownFields.add(p);
    return p;
  };

  const shapeProblem = formShapeProblem(deal);
  const body = shapeProblem ? null : (
    <IssueContext.Provider value={byField}>
      <section className="panel">
        <h2>Basics</h2>
        <div className="row-fields">
          <TextField
            label="Name"
            path={mark('deal.name')}
            value={deal.name ?? ''}
            wide
            onChange={(v) => update((d) => void (d.name = v))}
          />
          <NumberField
            label="Notional"
            path={mark('deal.notional')}
            value={deal.notional}
            rule={{ above: 0 }}
            suffix={deal.currency || undefined}
            onCommit={(v) => update((d) => void (d.notional = v))}
          />
          <TextField
            label="Payment currency"
            path={mark('deal.currency')}
            value={deal.currency ?? ''}
            placeholder="e.g. DOM"
            onChange={(v) => update((d) => void (d.currency = v.toUpperCase()))}
          />
          <TextField
            label="Valuation date"
            path={mark('deal.valuationDate')}
            value={deal.valuationDate ?? ''}
            placeholder="YYYY-MM-DD"
            check={(v) =>
              v === '' || /^\d{4}-\d{2}-\d{2}$/.test(v) ? null : 'Valuation date must be written YYYY-MM-DD'
            }
            onChange={(v) =>
              update((d) => {
                if (v === '') delete d.valuationDate;
                else d.valuationDate = v;
              })
            }
          />
          <NumberField
            label="Funding spread"
            path={mark('deal.fundingSpread')}
            value={deal.fundingSpread ?? 0}
            scale={1e4}
            suffix="bp"
            onCommit={(v) => update((d) => void (d.fundingSpread = v))}
          />
        </div>
        <TextField
          label="Description"
          path={mark('deal.description')}
          value={deal.description ?? ''}
          wide
          onChange={(v) => update((d) => void (d.description = v))}
        />
      </section>

      <section className="panel">
        <h2>Underlyings</h2>
        <table className="edit">
          <thead>
            <tr>
              <th>Id in formulas</th>
              <th>Kind</th>
              <th>Currency / pair</th>
              <th>Name in the market</th>
              <th />
            </tr>
          </thead>
          <tbody>
            {Object.entries(deal.underlyings ?? {}).map(([id, u]) => {
              const p = `deal.underlyings.${id}`;
              return (
                <tr key={id}>
                  <td>
                    <KeyField
                      label="Id"
                      path={mark(p)}
                      name={id}
                      taken={names}
                      onRename={(to) =>
                        update((d) => void (d.underlyings = renameKey(d.underlyings, id, to)))
                      }
                    />
                  </td>
                  <td>
                    <SelectField
                      label="Kind"
                      path={mark(`${p}.kind`)}
                      compact
                      value={u.kind}
                      options={[
                        { value: 'equity', label: 'equity or index' },
                        { value: 'fx', label: 'FX rate' },
                      ]}
                      onChange={(k) =>
                        update((d) => {
                          d.underlyings[id] = (
                            k === 'equity'
                              ? { kind: 'equity', currency: d.currency }
                              : { kind: 'fx', units: d.currency, per: '' }
                          ) as Underlying;
                        })
                      }
                    />
                  </td>
                  <td>
                    {u.kind === 'equity' ? (
                      <TextField
                        label="Currency"
                        path={mark(`${p}.currency`)}
                        compact
                        value={u.currency}
                        onChange={(v) =>
                          update(
                            (d) =>
                              void ((d.underlyings[id] as { currency: string }).currency = v.toUpperCase()),
                          )
                        }
                      />
                    ) : (
                      <div className="pair">
                        <TextField
                          label="Units"
                          path={mark(`${p}.units`)}
                          compact
                          value={u.units}
                          onChange={(v) =>
                            update(
                              (d) => void ((d.underlyings[id] as { units: string }).units = v.toUpperCase()),
                            )
                          }
                        />
                        <span>per</span>
                        <TextField
                          label="Per"
                          path={mark(`${p}.per`)}
                          compact
                          value={u.per}
                          onChange={(v) =>
                            update((d) => void ((d.underlyings[id] as { per: string }).per = v.toUpperCase()))
                          }
                        />
                      </div>
                    )}
                  </td>
                  <td>
                    {u.kind === 'equity' && (
                      <TextField
                        label="Market name"
                        path={mark(`${p}.marketName`)}
                        compact
                        value={u.marketName ?? ''}
                        placeholder={id}
                        onChange={(v) =>
                          update((d) => {
                            const x = d.underlyings[id] as { marketName?: string };
                            if (v === '') delete x.marketName;
                            else x.marketName = v;
                          })
                        }
                      />
                    )}
                  </td>
                  <td>
                    <button
                      className="icon"
                      aria-label={`Remove underlying ${id}`}
                      onClick={() => update((d) => void delete d.underlyings[id])}
                    >
                      ✕
                    </button>
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
        <button
          onClick={() =>
            update(
              (d) =>
                void (d.underlyings = {
                  ...(d.underlyings ?? {}),
                  [freshName(d.underlyings, 'EQ')]: { kind: 'equity', currency: d.currency },
                }),
            )
          }
        >
          Add underlying
        </button>
        <TextField
          label="Currencies whose rates the formulas read (comma separated)"
          path={mark('deal.rates')}
          value={(deal.rates ?? []).join(', ')}
          wide
          onChange={(v) =>
            update((d) => {
              const list = v
                .split(',')
                .map((x) => x.trim().toUpperCase())
                .filter(Boolean);
              if (list.length) d.rates = list;
              else delete d.rates;
            })
          }
        />
      </section>

      <div className="two-even">
        <section className="panel">
          <h2>Parameters</h2>
          <p className="hint">
            Numbers, or dates written YYYY-MM-DD (read as years from the valuation date).
          </p>
          {Object.entries(deal.parameters ?? {}).map(([k, v]) => (
            <div className="kv" key={k}>
              <KeyField
                label="Name"
                path={mark(`deal.parameters.${k}`)}
                name={k}
                taken={names}
                onRename={(to) => update((d) => void (d.parameters = renameKey(d.parameters ?? {}, k, to)))}
              />
              <TextField
                label="Value"
                path={mark(`deal.parameters.${k}.value`)}
                compact
                value={String(v)}
                check={(t) => (t.trim() === '' ? 'Value must be a number or a date' : null)}
                onChange={(t) =>
                  update(
                    (d) =>
                      void (d.parameters![k] = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(t.trim())
                        ? Number(t)
                        : t),
                  )
                }
              />
              <button
                className="icon"
                aria-label={`Remove parameter ${k}`}
                onClick={() => update((d) => void delete d.parameters![k])}
              >
                ✕
              </button>
            </div>
          ))}
          <button
            onClick={() =>
              update(
                (d) => void (d.parameters = { ...(d.parameters ?? {}), [freshName(d.parameters, 'P')]: 0 }),
              )
            }
          >
            Add parameter
          </button>
        </section>
        <section className="panel">
          <h2>State</h2>
          <p className="hint">
            Variables carried along each path (e.g. coupons missed, alive flag), with their start values.
          </p>
          {Object.entries(deal.state ?? {}).map(([k, v]) => (
            <div className="kv" key={k}>
              <KeyField
                label="Name"
                path={mark(`deal.state.${k}`)}
                name={k}
                taken={names}
                onRename={(to) => update((d) => void (d.state = renameKey(d.state ?? {}, k, to)))}
              />
              <NumberField
                label="Start value"
                path={mark(`deal.state.${k}.value`)}
                compact
                value={v}
                onCommit={(x) => update((d) => void (d.state![k] = x))}
              />
              <button
                className="icon"
                aria-label={`Remove state ${k}`}
                onClick={() => update((d) => void delete d.state![k])}
              >
                ✕
              </button>
            </div>
          ))}
          <button
            onClick={() =>
              update((d) => void (d.state = { ...(d.state ?? {}), [freshName(d.state, 'S')]: 0 }))
            }
          >
            Add state variable
          </button>
        </section>
      </div>

      <section className="panel">
        <h2>Schedules</h2>
        {Object.entries(deal.schedules ?? {}).map(([k, s]) => (
          <ScheduleRow
            key={k}
            id={k}
            schedule={s}
            names={names}
            update={update}
            mark={mark}
            moved={rolledDates(deal, k)}
          />
        ))}
        <button
          onClick={() =>
            update(
              (d) =>
                void (d.schedules = {
                  ...(d.schedules ?? {}),
                  [freshName(d.schedules, 'dates')]: { dates: [] },
                }),
            )
          }
        >
          Add schedule
        </button>
      </section>

      <CalendarPanel deal={deal} update={update} mark={mark} />

      <PastFixingsPanel
        deal={deal}
        needs={review?.historyNeeds}
        past={review?.compiled?.history}
        update={update}
        mark={mark}
      />

      <section className="panel">
        <h2>Events</h2>
        <p className="hint">
          On each date of its schedule an event may pay, update the state and end the deal. Formulas use the
          names above and t, dt, index, count; functions such as max, min, clamp, perf, lowest, average,
          short_rate, swap_rate.
        </p>
        {(deal.events ?? []).map((ev, i) => (
          <EventCard
            key={i}
            index={i}
            ev={ev}
            schedules={schedules}
            update={update}
            marks={marks}
            mark={mark}
            checking={checking}
          />
        ))}
        <button
          onClick={() =>
            update(
              (d) =>
                void (d.events = [
                  ...(d.events ?? []),
                  { label: 'payment', on: schedules[0] ?? '', pay: { amount: '0' } },
                ]),
            )
          }
        >
          Add event
        </button>
      </section>

      <section className="panel">
        <h2>Early exercise</h2>
        {(deal.exercise ?? []).map((x, i) => {
          const p = `deal.exercise[${i}]`;
          return (
            <div className="event-card" key={i}>
              <div className="row-fields">
                <TextField
                  label="Label"
                  path={mark(`${p}.label`)}
                  compact
                  value={x.label ?? ''}
                  onChange={(v) => update((d) => void (d.exercise![i]!.label = v))}
                />
                <SelectField
                  label="On schedule"
                  path={mark(`${p}.on`)}
                  compact
                  value={x.on}
                  options={schedules.map((s) => ({ value: s, label: s }))}
                  onChange={(v) => update((d) => void (d.exercise![i]!.on = v))}
                />
                <SelectField
                  label="Held by"
                  path={mark(`${p}.by`)}
                  compact
                  value={x.by}
                  options={[
                    { value: 'issuer', label: 'issuer (callable)' },
                    { value: 'holder', label: 'holder (puttable)' },
                  ]}
                  onChange={(v) => update((d) => void (d.exercise![i]!.by = v))}
                />
                <button
                  className="icon"
                  aria-label={`Remove exercise right ${i + 1}`}
                  onClick={() => update((d) => void d.exercise!.splice(i, 1))}
                >
                  ✕
                </button>
              </div>
              <ExpressionField
                label="Cash paid on exercise (per unit notional)"
                path={mark(`${p}.amount`)}
                value={x.amount}
                marks={marks.get(`${p}.amount`) ?? []}
                onChange={(v) => update((d) => void (d.exercise![i]!.amount = v))}
              />
            </div>
          );
        })}
        <button
          onClick={() =>
            update(
              (d) =>
                void (d.exercise = [
                  ...(d.exercise ?? []),
                  { on: schedules[0] ?? '', by: 'issuer', amount: '1' },
                ]),
            )
          }
        >
          Add exercise right
        </button>
      </section>
    </IssueContext.Provider>
  );

  const unplaced = errors.filter((i) => !shownFields.has(i.field));
  return (
    <div className="screen deal">
      <div className="two-col">
        <aside className="side-panel">
          <h2>Templates</h2>
          {DEAL_TEMPLATES.length === 0 && <p className="empty">No templates in this build.</p>}
          <ul className="templates">
            {DEAL_TEMPLATES.map((t) => (
              <li key={t.id}>
                <button
                  className={deal.name === t.deal.name ? 'current' : ''}
                  onClick={() => {
                    const edited = !DEAL_TEMPLATES.some(
                      (x) => JSON.stringify(x.deal) === JSON.stringify(deal),
                    );
                    if (
                      edited &&
                      !window.confirm(
                        'Replace the deal you are editing with this template? Save the deal file first to keep it.',
                      )
                    )
                      return;
                    dispatch({ type: 'setDeal', deal: structuredClone(t.deal) });
                    notify('info', `Template "${t.deal.name}" loaded.`);
                  }}
                  data-template={t.id}
                >
                  <strong>{t.deal.name}</strong>
                  {t.deal.description && <span>{t.deal.description}</span>}
                </button>
              </li>
            ))}
          </ul>
          <div className="button-row">
            <button onClick={() => void openDealFile()}>Open deal file…</button>
            <button onClick={() => void saveDealFile()}>Save deal file…</button>
          </div>
          <h2>Check</h2>
          <div className="check-status" data-testid="deal-status" aria-live="polite">
            {engineError ? (
              <span className="msg-error">The check could not run: {engineError}</span>
            ) : checking && !review ? (
              'Checking…'
            ) : errors.length === 0 ? (
              <span className="ok">No problems found.</span>
            ) : (
              <span className="msg-error">
                {errors.length} problem{errors.length > 1 ? 's' : ''} to fix.
              </span>
            )}
          </div>
          {unplaced.length > 0 && (
            <ul className="problems">
              {unplaced.map((i, k) => (
                <li key={k} className="msg-error">
                  {i.message}
                </li>
              ))}
            </ul>
          )}
          {review?.rules && (
            <>
              <h2>What the study will test</h2>
              <ul className="rules" data-testid="deal-rules">
                {review.rules.factors.map((f) => (
                  <li key={f.factor}>
                    <VerdictMark verdict={f.status === 'candidate' ? 'undecided' : f.status} />{' '}
                    <strong>{FACTOR_SHORT[f.factor] ?? f.factor}</strong>:{' '}
                    {f.status === 'candidate'
                      ? 'candidate, to be decided by simulation'
                      : f.status === 'required'
                        ? 'required by the payoff'
                        : 'not needed'}{' '}
                    — {f.reason}
                  </li>
                ))}
              </ul>
              {review.rules.notes.length > 0 && (
                <ul className="tight">
                  {review.rules.notes.map((n, k) => (
                    <li key={k}>{n}</li>
                  ))}
                </ul>
              )}
            </>
          )}
          {review?.analysis && (
            <>
              <h2>What the rules read in the payoff</h2>
              <ul className="tight">
                {review.analysis.reasons.map((r, k) => (
                  <li key={k}>{r}</li>
                ))}
              </ul>
            </>
          )}
        </aside>
        <section className="editor">
          {shapeProblem ? (
            <div className="banner banner-error" role="alert" data-testid="deal-shape">
              The form cannot show this deal: {shapeProblem}. Correct it in the deal file below; nothing has
              been changed or lost.
            </div>
          ) : (
            <ScreenBoundary name="deal form">{body}</ScreenBoundary>
          )}
          <DealSource deal={deal} onApply={(d) => dispatch({ type: 'setDeal', deal: d })} />
        </section>
      </div>
    </div>
  );
}

/** Roll conventions as the schedule editor offers them (ISDA 2006 Definitions, Sec. 4.12; from memory). */
const ROLL_OPTIONS: { value: RollConvention; label: string }[] = [
  { value: 'none', label: 'keep dates as written' },
  { value: 'following', label: 'next business day (following)' },
  { value: 'modifiedFollowing', label: 'next, or previous if that changes month (modified following)' },
  { value: 'preceding', label: 'previous business day (preceding)' },
];

function ScheduleRow(props: {
  id: string;
  schedule: ScheduleInput;
  names: string[];
  update(f: Mutator): void;
  mark(p: string): string;
  /** Dates the roll convention moves (null: the schedule does not roll, or cannot be expanded yet). */
  moved: RolledDate[] | null;
}) {
  const { id, schedule: s, update, mark } = props;
  const p = `deal.schedules.${id}`;
  const explicit = 'dates' in s;
  const roll = s.roll ?? 'none';
  const withRoll = (x: ScheduleInput): ScheduleInput => (roll === 'none' ? x : { ...x, roll });
  // Issues of single dates (e.g. a year fraction that cannot be rolled) are shown at the dates field.
  for (const f of useContext(IssueContext).keys()) if (f.startsWith(`${p}.dates[`)) mark(f);
  return (
    <div className="kv schedule">
      <KeyField
        label="Name"
        path={mark(p)}
        name={id}
        taken={props.names}
        onRename={(to) => update((d) => void (d.schedules = renameKey(d.schedules, id, to)))}
      />
      <SelectField
        label="Given as"
        path={mark(`${p}.kind`)}
        compact
        value={explicit ? 'dates' : 'rule'}
        options={[
          { value: 'dates', label: 'list of dates' },
          { value: 'rule', label: 'start, end, step' },
        ]}
        onChange={(v) =>
          update(
            (d) =>
              void (d.schedules[id] = withRoll(
                v === 'dates' ? { dates: [] } : { start: d.valuationDate ?? '', end: '', every: '1Y' },
              )),
          )
        }
      />
      {explicit ? (
        <TextField
          label="Dates (comma separated: YYYY-MM-DD or years)"
          path={mark(`${p}.dates`)}
          wide
          itemIssues
          value={s.dates.join(', ')}
          onChange={(v) =>
            update(
              (d) =>
                void (d.schedules[id] = withRoll({
                  dates: v
                    .split(',')
                    .map((x) => x.trim())
                    .filter(Boolean)
                    .map((x) => (/^[+-]?(\d+\.?\d*|\.\d+)$/.test(x) ? Number(x) : x)),
                })),
            )
          }
        />
      ) : (
        <>
          <TextField
            label="Start"
            path={mark(`${p}.start`)}
            compact
            value={String(s.start)}
            placeholder="YYYY-MM-DD"
            onChange={(v) => update((d) => void ((d.schedules[id] as { start: string }).start = v))}
          />
          <TextField
            label="End"
            path={mark(`${p}.end`)}
            compact
            value={String(s.end)}
            placeholder="YYYY-MM-DD"
            onChange={(v) => update((d) => void ((d.schedules[id] as { end: string }).end = v))}
          />
          <TextField
            label="Step (1M, 3M, 1Y, 5B business days…)"
            path={mark(`${p}.every`)}
            compact
            value={s.every}
            onChange={(v) => update((d) => void ((d.schedules[id] as { every: string }).every = v))}
          />
        </>
      )}
      <SelectField
        label="Date not a business day"
        path={mark(`${p}.roll`)}
        compact
        value={roll}
        options={ROLL_OPTIONS}
        onChange={(v) =>
          update((d) => {
            const x = d.schedules[id]!;
            if (v === 'none') delete x.roll;
            else x.roll = v;
          })
        }
      />
      <button
        className="icon"
        aria-label={`Remove schedule ${id}`}
        onClick={() => update((d) => void delete d.schedules[id])}
      >
        ✕
      </button>
      {props.moved && (
        <p className="hint rolled" data-testid={`rolled-${id}`}>
          {props.moved.length === 0
            ? 'Every date is a business day: nothing moves.'
            : `Moved: ${props.moved
                .slice(0, 6)
                .map((m) => `${m.from} → ${m.to}`)
                .join(', ')}${props.moved.length > 6 ? ` and ${props.moved.length - 6} more` : ''}.`}
        </p>
      )}
    </div>
  );
}

function EventCard(props: {
  index: number;
  ev: EventInput;
  schedules: string[];
  update(f: Mutator): void;
  marks: Map<string, ExpressionMark[]>;
  mark(p: string): string;
  checking: boolean;
}) {
  const { index: i, ev, update, marks, mark } = props;
  const p = `deal.events[${i}]`;
  const pays = asList<PaymentInput>(ev.pay);
  const single = !Array.isArray(ev.pay);
  const headingId = useId();
  const setPays = (d: DealInput, list: PaymentInput[]): void => {
    const e = d.events[i]!;
    if (list.length === 0) delete e.pay;
    else e.pay = list.length === 1 && single ? list[0]! : list;
  };
  return (
    <div className="event-card" aria-labelledby={headingId}>
      <div className="row-fields">
        <span className="event-no" id={headingId}>
          Event {i + 1}
        </span>
        <TextField
          label="Label"
          path={mark(`${p}.label`)}
          compact
          value={ev.label ?? ''}
          onChange={(v) => update((d) => void (d.events[i]!.label = v))}
        />
        <SelectField
          label="On schedule"
          path={mark(`${p}.on`)}
          compact
          value={ev.on}
          options={[
            ...(props.schedules.includes(ev.on) ? [] : [{ value: ev.on, label: ev.on || '(choose)' }]),
            ...props.schedules.map((s) => ({ value: s, label: s })),
          ]}
          onChange={(v) => update((d) => void (d.events[i]!.on = v))}
        />
        <CheckField
          label="Ends the deal when it fires"
          path={mark(`${p}.terminate`)}
          value={ev.terminate === true}
          onChange={(v) =>
            update((d) => void (v ? (d.events[i]!.terminate = true) : delete d.events[i]!.terminate))
          }
        />
        <button
          className="icon"
          aria-label={`Remove event ${i + 1}`}
          onClick={() => update((d) => void d.events.splice(i, 1))}
        >
          ✕
        </button>
      </div>
      <ExpressionField
        label="Fires when (leave empty: always)"
        path={mark(`${p}.when`)}
        value={ev.when ?? ''}
        marks={marks.get(`${p}.when`) ?? []}
        onChange={(v) => update((d) => void (v === '' ? delete d.events[i]!.when : (d.events[i]!.when = v)))}
      />
      {pays.map((pay, j) => {
        const pp = single ? `${p}.pay` : `${p}.pay[${j}]`;
        return (
          <div className="pay-row" key={j}>
            <ExpressionField
              label={`Pays (per unit notional)${pays.length > 1 ? ` #${j + 1}` : ''}`}
              path={mark(`${pp}.amount`)}
              value={pay.amount}
              marks={marks.get(`${pp}.amount`) ?? []}
              onChange={(v) =>
                update((d) =>
                  setPays(
                    d,
                    pays.map((x, k) => (k === j ? { ...x, amount: v } : x)),
                  ),
                )
              }
            />
            <TextField
              label="Currency"
              path={mark(`${pp}.currency`)}
              compact
              value={pay.currency ?? ''}
              placeholder="currency (deal's if empty)"
              onChange={(v) =>
                update((d) =>
                  setPays(
                    d,
                    pays.map((x, k) => {
                      if (k !== j) return x;
                      const { currency: _c, ...rest } = x;
                      return v === '' ? rest : { ...rest, currency: v.toUpperCase() };
                    }),
                  ),
                )
              }
            />
            {pay.currency && pay.currency !== '' && (
              <SelectField
                label="Converted"
                path={mark(`${pp}.conversion`)}
                compact
                value={pay.conversion?.kind ?? 'none'}
                options={[
                  { value: 'none', label: '(choose)' },
                  { value: 'compo', label: 'at the FX rate on the path (compo)' },
                  { value: 'quanto', label: 'at a fixed rate (quanto)' },
                ]}
                onChange={(v) =>
                  update((d) =>
                    setPays(
                      d,
                      pays.map((x, k) => {
                        if (k !== j) return x;
                        const { conversion: _c, ...rest } = x;
                        return v === 'compo'
                          ? { ...rest, conversion: { kind: 'compo' } }
                          : v === 'quanto'
                            ? { ...rest, conversion: { kind: 'quanto', rate: 1 } }
                            : rest;
                      }),
                    ),
                  )
                }
              />
            )}
            {pay.conversion?.kind === 'quanto' && (
              <NumberField
                label="Fixed rate"
                path={mark(`${pp}.conversion.rate`)}
                compact
                value={pay.conversion.rate}
                rule={{ above: 0 }}
                onCommit={(v) =>
                  update((d) =>
                    setPays(
                      d,
                      pays.map((x, k) => (k === j ? { ...x, conversion: { kind: 'quanto', rate: v } } : x)),
                    ),
                  )
                }
              />
            )}
            <button
              className="icon"
              aria-label={`Remove payment ${j + 1} of event ${i + 1}`}
              onClick={() =>
                update((d) =>
                  setPays(
                    d,
                    pays.filter((_, k) => k !== j),
                  ),
                )
              }
            >
              ✕
            </button>
          </div>
        );
      })}
      <button onClick={() => update((d) => void (d.events[i]!.pay = [...pays, { amount: '0' }]))}>
        Add payment
      </button>
      {Object.entries(ev.set ?? {}).map(([k, expr]) => (
        <div className="pay-row" key={k}>
          <span className="set-label">
            set <strong>{k}</strong> to
          </span>
          <ExpressionField
            label={`New value of ${k}`}
            path={mark(`${p}.set.${k}`)}
            value={expr}
            marks={marks.get(`${p}.set.${k}`) ?? []}
            onChange={(v) => update((d) => void (d.events[i]!.set![k] = v))}
          />
          <button
            className="icon"
            aria-label={`Stop updating ${k}`}
            onClick={() => update((d) => void delete d.events[i]!.set![k])}
          >
            ✕
          </button>
        </div>
      ))}
      <StateUpdateAdder
        ev={ev}
        onAdd={(k) => update((d) => void (d.events[i]!.set = { ...(d.events[i]!.set ?? {}), [k]: k }))}
      />
    </div>
  );
}

function StateUpdateAdder(props: { ev: EventInput; onAdd(name: string): void }) {
  const { doc } = useApp();
  const free = Object.keys(doc.deal.state ?? {}).filter((k) => !(props.ev.set && k in props.ev.set));
  if (free.length === 0) return null;
  return (
    <div className="adder">
      Update state:{' '}
      {free.map((k) => (
        <button key={k} onClick={() => props.onAdd(k)}>
          {k}
        </button>
      ))}
    </div>
  );
}

/**
 * The deal file as text, for everything the form does not show. Text that is not valid JSON stays in the box
 * (and in the draft) with the reason beside it; valid text replaces the deal and the form follows.
 */
function DealSource(props: { deal: DealInput; onApply(d: DealInput): void }) {
  const { raw, setRaw } = useContext(RawContext);
  const key = 'deal.$source';
  const pretty = useMemo(() => JSON.stringify(props.deal, null, 2), [props.deal]);
  const text = raw[key] ?? pretty;
  const id = useId();
  let problem: string | null = null;
  if (raw[key] !== undefined) {
    try {
      const v = JSON.parse(text) as unknown;
      if (!v || typeof v !== 'object' || Array.isArray(v)) problem = 'the deal file must be a JSON object';
    } catch (e) {
      problem = `not valid JSON yet: ${errorText(e)}`;
    }
  }
  return (
    <details className="panel source">
      <summary>Deal file (JSON)</summary>
      <p className="hint">
        Edit the whole deal as text. Valid text replaces the deal at once; the checks above then apply to it.
      </p>
      <textarea
        id={id}
        className="mono"
        rows={18}
        spellCheck={false}
        value={text}
        aria-invalid={problem !== null}
        data-path={key}
        onChange={(e) => {
          // The text stays as typed while editing; a valid deal is applied at once.
          const t = e.target.value;
          setRaw(key, t);
          try {
            const v = JSON.parse(t) as unknown;
            if (v && typeof v === 'object' && !Array.isArray(v)) props.onApply(v as DealInput);
          } catch {
            /* not valid yet: the message below says why */
          }
        }}
        onBlur={() => {
          if (raw[key] === undefined) return;
          try {
            const v = JSON.parse(raw[key]!) as unknown;
            if (v && typeof v === 'object' && !Array.isArray(v)) setRaw(key, null);
          } catch {
            /* keep the text the user typed */
          }
        }}
      />
      {problem && (
        <div className="msg-error" role="alert">
          Deal file: {problem}
        </div>
      )}
    </details>
  );
}

type HistorySection = 'fixings' | 'rates';

/** One row of the past-fixings table: a value the deal needs, or one the file gives that nothing reads. */
interface PastRow {
  section: HistorySection;
  name: string;
  date: string;
  field: string;
  /** What reads it; null when the file gives it but nothing needs it. */
  neededBy: string | null;
}

/** The rows to show: every needed value (from the engine check) and every value the file gives, by date. */
export function pastFixingRows(deal: DealInput, needs: HistoryNeed[] | undefined): PastRow[] {
  const rows: PastRow[] = (needs ?? []).map((n) => ({
    section: n.kind === 'fixing' ? 'fixings' : 'rates',
    name: n.name,
    date: n.date,
    field: n.field,
    neededBy: n.neededBy,
  }));
  const seen = new Set(rows.map((r) => r.field));
  for (const section of ['fixings', 'rates'] as const)
    for (const [name, byDate] of Object.entries(deal.history?.[section] ?? {}))
      for (const date of Object.keys(byDate ?? {})) {
        const field = `deal.history.${section}.${name}["${date}"]`;
        if (!seen.has(field)) rows.push({ section, name, date, field, neededBy: null });
      }
  return rows.sort(
    (a, b) =>
      a.date.localeCompare(b.date) || a.section.localeCompare(b.section) || a.name.localeCompare(b.name),
  );
}

/**
 * Past fixings of a deal under way: one row per past date that needs a level (or a fixed rate), with the engine's
 * message at the field; shown only when the deal has a date or a period before its valuation date (or the file
 * gives past values). Values typed are kept as typed until they are valid numbers.
 */
export function PastFixingsPanel(props: {
  deal: DealInput;
  needs: HistoryNeed[] | undefined;
  past: CompiledHistory | undefined;
  update(f: Mutator): void;
  mark(p: string): string;
}) {
  const { deal, update, mark } = props;
  const rows = pastFixingRows(deal, props.needs);
  if (rows.length === 0 && props.needs === undefined) return null;
  const missing = (props.needs ?? []).filter((n) => !n.given).length;
  const setValue = (r: PastRow, v: number): void =>
    update((d) => {
      const h = (d.history ??= {});
      const sec = (h[r.section] ??= {});
      (sec[r.name] ??= {})[r.date] = v;
    });
  const remove = (r: PastRow): void =>
    update((d) => {
      const sec = d.history?.[r.section];
      if (!sec?.[r.name]) return;
      delete sec[r.name]![r.date];
      if (Object.keys(sec[r.name]!).length === 0) delete sec[r.name];
      if (Object.keys(sec).length === 0) delete d.history![r.section];
      if (Object.keys(d.history!).length === 0) delete d.history;
    });
  const valueOf = (r: PastRow): number | undefined => deal.history?.[r.section]?.[r.name]?.[r.date];
  return (
    <section className="panel past-fixings" data-testid="past-fixings">
      <h2>Past fixings</h2>
      <p className="hint">
        This deal began before its valuation date{deal.valuationDate ? ` (${deal.valuationDate})` : ''}. Give
        the level observed on each past date below (rates as a simple rate per year, fixed on the day their
        period starts). The past is run once from these values: state, running lowest, highest and average,
        and the first remaining accrual come out of it; coupons already paid are not part of the value.
      </p>
      <p className={missing > 0 ? 'msg-error' : 'ok'} data-testid="past-fixings-status">
        {props.needs === undefined
          ? 'The dates needed are listed once the rest of the deal checks without errors.'
          : missing > 0
            ? `${missing} past value${missing > 1 ? 's' : ''} still needed.`
            : 'Every past value the deal needs is given.'}
      </p>
      {rows.length > 0 && (
        <table className="data">
          <thead>
            <tr>
              <th>Date</th>
              <th>Underlying or rate</th>
              <th>Needed by</th>
              <th>Value</th>
              <th />
            </tr>
          </thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.field} data-past-field={r.field}>
                <td>{r.date}</td>
                <td>{r.section === 'fixings' ? r.name : `${r.name} rate`}</td>
                <td>{r.neededBy ?? <span className="hint">nothing reads it</span>}</td>
                <td>
                  <NumberField
                    label={
                      r.section === 'fixings' ? `${r.name} on ${r.date}` : `${r.name} rate fixed ${r.date}`
                    }
                    path={mark(r.field)}
                    value={valueOf(r)}
                    scale={r.section === 'rates' ? 100 : 1}
                    suffix={r.section === 'rates' ? '%' : undefined}
                    rule={r.section === 'fixings' ? { above: 0 } : {}}
                    compact
                    onCommit={(v) => setValue(r, v)}
                  />
                </td>
                <td>
                  {valueOf(r) !== undefined && (
                    <button onClick={() => remove(r)} aria-label={`Remove ${r.field}`}>
                      Remove
                    </button>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {props.past && props.past.payments.length > 0 && (
        <>
          <h3>Paid before the valuation date (not part of the value)</h3>
          <ul className="tight" data-testid="past-payments">
            {props.past.payments.map((p, k) => (
              <li key={k}>
                {p.date} {p.event}: {p.cash.toLocaleString('en-GB', { maximumFractionDigits: 2 })}{' '}
                {p.currency}
              </li>
            ))}
          </ul>
        </>
      )}
      {props.past && props.past.ignoredExercise.length > 0 && (
        <p className="hint">
          Exercise dates already past (not taken):{' '}
          {props.past.ignoredExercise.map((x) => `${x.label} ${x.date}`).join(', ')}.
        </p>
      )}
      {props.past && Object.keys(props.past.state).length > 0 && (
        <p className="hint" data-testid="past-state">
          State after the past:{' '}
          {Object.entries(props.past.state)
            .map(([k, v]) => `${k} = ${v}`)
            .join(', ')}
          .
        </p>
      )}
    </section>
  );
}
