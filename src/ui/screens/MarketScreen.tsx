/**
 * Market: the snapshot the ladder is calibrated to, as tables with a plot beside each — discount curves,
 * equity vol grids and their smiles, rate vols, FX, and the correlation matrix with its positive
 * semi-definiteness check (the nearest valid matrix is offered, never applied without asking).
 */
import { useEffect, useMemo, useState } from 'react';
import type { CorrelationCheck } from '../../engine/api/index.ts';
import type { FieldIssue } from '../../engine/errors.ts';
import type { MarketSnapshot } from '../../engine/market/types.ts';
import { errorText, useApp } from '../state/appContext.ts';
import { LineChart } from '../components/charts.tsx';
import { IssueContext, issuesByField, NumberField, SelectField } from '../components/fields.tsx';
import { CsvPaste } from '../components/CsvPaste.tsx';
import { num, pct } from '../components/format.ts';

type Tab = 'curves' | 'equities' | 'rates' | 'fx' | 'correlation';

function normField(f: string): string {
  return f.replace(/^(market|snapshot)(\[\d+\])?\./, '');
}

export function MarketScreen() {
  const { doc, dispatch, engine, platform, notify } = useApp();
  const [index, setIndex] = useState(0);
  const [tab, setTab] = useState<Tab>('curves');
  const [issues, setIssues] = useState<FieldIssue[]>([]);
  const m = doc.markets[Math.min(index, doc.markets.length - 1)];

  useEffect(() => {
    if (!m) return;
    const ac = new AbortController();
    const t = setTimeout(() => {
      engine.call('market.check', { snapshot: m }, { signal: ac.signal }).then(
        (r) => setIssues(r.issues.map((i) => ({ ...i, field: normField(i.field) }))),
        (e) => {
          if ((e as { code?: string }).code !== 'E_CANCELLED')
            setIssues([
              { code: 'E_CHECK', field: '', rule: '', value: null, message: errorText(e), severity: 'error' },
            ]);
        },
      );
    }, 150);
    return () => {
      clearTimeout(t);
      ac.abort();
    };
  }, [m, engine]);

  const byField = useMemo(() => issuesByField(issues), [issues]);
  if (!m)
    return (
      <div className="screen">
        <div className="empty-state">
          <h2>No market snapshot</h2>
          <p>Import a snapshot file to price against.</p>
          <ImportButton />
        </div>
      </div>
    );

  const edit = (f: (x: MarketSnapshot) => void): void => {
    const x = structuredClone(m);
    f(x);
    dispatch({ type: 'setMarket', index, market: x });
  };

  const errors = issues.filter((i) => i.severity === 'error');
  const warnings = issues.filter((i) => i.severity === 'warning');
  return (
    <div className="screen market">
      <div className="market-head">
        <div className="tabs" role="tablist" aria-label="Snapshot dates">
          {doc.markets.map((s, i) => (
            <button
              key={i}
              role="tab"
              aria-selected={i === index}
              className={i === index ? 'current' : ''}
              onClick={() => setIndex(i)}
            >
              {s.date}
              {i === 0 ? ' · pricing' : ''}
            </button>
          ))}
        </div>
        <div className="button-row">
          <ImportButton />
          <button
            onClick={async () => {
              try {
                const r = await platform.saveFile({
                  kind: 'market',
                  suggestedName: `market-${m.date}`,
                  text: JSON.stringify(m, null, 2) + '\n',
                  handle: null,
                });
                if (r) notify('success', `Saved ${r.name}.`);
              } catch (e) {
                notify('error', `Not saved: ${errorText(e)}`);
              }
            }}
          >
            Save snapshot…
          </button>
          {index > 0 && (
            <button
              onClick={() => {
                dispatch({ type: 'setMarkets', markets: doc.markets.filter((_, i) => i !== index) });
                setIndex(0);
              }}
            >
              Remove this date
            </button>
          )}
        </div>
      </div>
      <p className="hint">
        {m.name ?? 'Snapshot'} · numeraire {m.domestic} · {doc.markets.length} date(s): the first prices the
        deal, the others measure stability.
      </p>
      <div className="check-status" data-testid="market-status">
        {errors.length === 0 ? (
          <span className="ok">The snapshot passes every check.</span>
        ) : (
          <span className="msg-error">{errors.length} problem(s) to fix before a run.</span>
        )}
        {warnings.length > 0 && <span className="msg-warn"> {warnings.length} warning(s).</span>}
      </div>
      {(errors.length > 0 || warnings.length > 0) && (
        <details className="problems" open={errors.length > 0}>
          <summary>All problems and warnings</summary>
          <ul>
            {[...errors, ...warnings].slice(0, 40).map((i, k) => (
              <li key={k} className={i.severity === 'error' ? 'msg-error' : 'msg-warn'}>
                {i.message}
              </li>
            ))}
          </ul>
        </details>
      )}
      <div className="tabs sub" role="tablist" aria-label="Market sections">
        {(
          [
            ['curves', 'Curves'],
            ['equities', 'Equities and vols'],
            ['rates', 'Rate vols'],
            ['fx', 'FX'],
            ['correlation', 'Correlation'],
          ] as [Tab, string][]
        ).map(([t, l]) => (
          <button
            key={t}
            role="tab"
            aria-selected={tab === t}
            className={tab === t ? 'current' : ''}
            onClick={() => setTab(t)}
            data-tab={t}
          >
            {l}
          </button>
        ))}
      </div>
      <IssueContext.Provider value={byField}>
        {tab === 'curves' && <Curves m={m} edit={edit} />}
        {tab === 'equities' && <Equities m={m} edit={edit} />}
        {tab === 'rates' && <RateVols m={m} edit={edit} />}
        {tab === 'fx' && <Fx m={m} edit={edit} />}
        {tab === 'correlation' && <Correlation m={m} edit={edit} />}
      </IssueContext.Provider>
    </div>
  );
}

function ImportButton() {
  const { doc, dispatch, platform, notify } = useApp();
  return (
    <button
      onClick={async () => {
        try {
          const f = await platform.pickFile('market');
          if (!f) return;
          let json: unknown;
          try {
            json = JSON.parse(f.text);
          } catch (e) {
            notify('error', `${f.name} is not valid JSON: ${errorText(e)}`);
            return;
          }
          const snap = json as MarketSnapshot;
          if (!snap || typeof snap !== 'object' || snap.schema !== 'factor-triage/market@1') {
            notify(
              'error',
              `${f.name} is not a market snapshot (it needs "schema": "factor-triage/market@1").`,
            );
            return;
          }
          dispatch({ type: 'setMarkets', markets: [...doc.markets, snap] });
          notify('info', `Added the snapshot of ${snap.date}; any problem is shown on its fields.`);
        } catch (e) {
          notify('error', `Could not open the file: ${errorText(e)}`);
        }
      }}
    >
      Import snapshot…
    </button>
  );
}

type Edit = (f: (x: MarketSnapshot) => void) => void;

function Curves(props: { m: MarketSnapshot; edit: Edit }) {
  const { m, edit } = props;
  const series = Object.entries(m.curves).map(([ccy, c]) => ({
    name: ccy,
    points: c.times.map((t, i) => ({
      x: t,
      y: c.zeroRates ? c.zeroRates[i]! : -Math.log(c.discountFactors?.[i] ?? NaN) / t,
    })),
  }));
  return (
    <div className="two-even">
      <div>
        {Object.entries(m.curves).map(([ccy, c]) => (
          <section className="panel" key={ccy}>
            <h2>{ccy} discount curve</h2>
            <table className="edit compact-table">
              <thead>
                <tr>
                  <th>Time (years)</th>
                  <th>{c.zeroRates ? 'Zero rate (%, cont.)' : 'Discount factor'}</th>
                  <th />
                </tr>
              </thead>
              <tbody>
                {c.times.map((t, i) => (
                  <tr key={i}>
                    <td>
                      <NumberField
                        label={`${ccy} time ${i + 1}`}
                        compact
                        path={`curves.${ccy}.times[${i}]`}
                        value={t}
                        rule={{ above: 0 }}
                        onCommit={(v) => edit((x) => void (x.curves[ccy]!.times[i] = v))}
                      />
                    </td>
                    <td>
                      {c.zeroRates ? (
                        <NumberField
                          label={`${ccy} zero rate ${i + 1}`}
                          compact
                          path={`curves.${ccy}.zeroRates[${i}]`}
                          value={c.zeroRates[i]}
                          scale={100}
                          onCommit={(v) => edit((x) => void (x.curves[ccy]!.zeroRates![i] = v))}
                        />
                      ) : (
                        <NumberField
                          label={`${ccy} discount factor ${i + 1}`}
                          compact
                          path={`curves.${ccy}.discountFactors[${i}]`}
                          value={c.discountFactors?.[i]}
                          rule={{ above: 0 }}
                          onCommit={(v) => edit((x) => void (x.curves[ccy]!.discountFactors![i] = v))}
                        />
                      )}
                    </td>
                    <td>
                      <button
                        className="icon"
                        aria-label={`Remove pillar ${i + 1} of ${ccy}`}
                        onClick={() =>
                          edit((x) => {
                            const cv = x.curves[ccy]!;
                            cv.times.splice(i, 1);
                            cv.zeroRates?.splice(i, 1);
                            cv.discountFactors?.splice(i, 1);
                          })
                        }
                      >
                        ✕
                      </button>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
            <button
              className="small"
              onClick={() =>
                edit((x) => {
                  const cv = x.curves[ccy]!;
                  const n = cv.times.length;
                  cv.times.push(n ? cv.times[n - 1]! + 1 : 1);
                  if (cv.zeroRates) cv.zeroRates.push(n ? cv.zeroRates[n - 1]! : 0);
                  if (cv.discountFactors) cv.discountFactors.push(n ? cv.discountFactors[n - 1]! : 1);
                })
              }
            >
              Add pillar
            </button>{' '}
            <CsvPaste
              title={`Pillars of ${ccy}`}
              hint="Two columns: time in years, zero rate as a decimal (0.025) or with % (2.5%). An optional header row."
              apply={(t) => {
                if (t.rows.some((r) => r.length !== 2))
                  return 'every row needs exactly two numbers: time, zero rate';
                edit((x) => {
                  x.curves[ccy] = {
                    currency: ccy,
                    times: t.rows.map((r) => r[0]!),
                    zeroRates: t.rows.map((r) => r[1]!),
                  };
                });
                return null;
              }}
            />
          </section>
        ))}
      </div>
      <div>
        <LineChart
          title="Zero curves"
          series={series}
          xLabel="maturity (years)"
          yLabel="zero rate (cont.)"
          yFormat={(v) => pct(v, 2)}
        />
      </div>
    </div>
  );
}

function Equities(props: { m: MarketSnapshot; edit: Edit }) {
  const { m, edit } = props;
  const names = Object.keys(m.equities);
  const [name, setName] = useState(names[0] ?? '');
  const e = m.equities[name] ?? m.equities[names[0] ?? ''];
  const eq = m.equities[name] ? name : (names[0] ?? '');
  if (!e) return <p className="empty">This snapshot has no equities.</p>;
  const cols = e.vols.moneyness ?? e.vols.strikes ?? [];
  const colKey = e.vols.moneyness ? 'moneyness' : 'strikes';
  const p = `equities.${eq}`;
  return (
    <div>
      <div className="row-fields">
        <SelectField
          label="Equity"
          path="equity"
          value={eq}
          options={names.map((n) => ({ value: n, label: `${n} (${m.equities[n]!.currency})` }))}
          onChange={setName}
        />
        <NumberField
          label="Spot"
          path={`${p}.spot`}
          value={e.spot}
          rule={{ above: 0 }}
          onCommit={(v) => edit((x) => void (x.equities[eq]!.spot = v))}
        />
        <NumberField
          label="Dividend yield"
          path={`${p}.divYield`}
          value={e.divYield}
          scale={100}
          suffix="%"
          onCommit={(v) => edit((x) => void (x.equities[eq]!.divYield = v))}
        />
      </div>
      <div className="two-even">
        <section className="panel">
          <h2>Implied vols (%), expiry × {colKey === 'moneyness' ? 'moneyness K/S₀' : 'strike'}</h2>
          <div className="scroll-x">
            <table className="edit grid-table">
              <thead>
                <tr>
                  <th>Expiry</th>
                  {cols.map((c, j) => (
                    <th key={j}>{num(c, 4)}</th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {e.vols.expiries.map((t, i) => (
                  <tr key={i}>
                    <th>{num(t, 4)}y</th>
                    {cols.map((_, j) => (
                      <td key={j}>
                        <NumberField
                          label={`vol ${num(t, 3)}y ${num(cols[j], 3)}`}
                          compact
                          path={`${p}.vols.vols[${i}][${j}]`}
                          value={e.vols.vols[i]?.[j]}
                          scale={100}
                          rule={{ above: 0 }}
                          onCommit={(v) => edit((x) => void (x.equities[eq]!.vols.vols[i]![j] = v))}
                        />
                      </td>
                    ))}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
          <CsvPaste
            title={`Vol grid of ${eq}`}
            hint={`First row: the ${colKey} (after an empty or label cell); then one row per expiry: expiry in years, then the vols (0.22 or 22%).`}
            apply={(t) => {
              const header = t.header ? t.header.slice(1).map(Number) : t.rows[0]!.slice(1);
              const rows = t.header ? t.rows : t.rows.slice(1);
              if (header.some((h) => !Number.isFinite(h)))
                return `the first row must hold the ${colKey} as numbers`;
              if (rows.length === 0) return 'the table needs at least one expiry row';
              const bad = rows.findIndex((r) => r.length !== header.length + 1);
              if (bad >= 0)
                return `expiry row ${bad + 1} has ${rows[bad]!.length - 1} vols; the header has ${header.length} columns`;
              edit((x) => {
                const v = x.equities[eq]!.vols;
                v.expiries = rows.map((r) => r[0]!);
                v.vols = rows.map((r) => r.slice(1).map((q) => (q > 3 ? q / 100 : q)));
                if (colKey === 'moneyness') v.moneyness = header;
                else v.strikes = header;
              });
              return null;
            }}
          />
        </section>
        <LineChart
          title={`Smile of ${eq} per expiry`}
          xLabel={colKey === 'moneyness' ? 'moneyness K/S₀' : 'strike'}
          yLabel="implied vol"
          yFormat={(v) => pct(v, 0)}
          series={e.vols.expiries.map((t, i) => ({
            name: `${num(t, 3)}y`,
            points: cols.map((c, j) => ({ x: c, y: e.vols.vols[i]?.[j] ?? NaN })),
          }))}
          height={300}
        />
      </div>
    </div>
  );
}

function RateVols(props: { m: MarketSnapshot; edit: Edit }) {
  const { m, edit } = props;
  const entries = Object.entries(m.rateVols ?? {});
  if (entries.length === 0)
    return (
      <p className="empty">
        This snapshot quotes no rate vols; stochastic-rate variants then cannot be calibrated.
      </p>
    );
  return (
    <div className="two-even">
      <div>
        {entries.map(([ccy, rv]) => (
          <section className="panel" key={ccy}>
            <h2>
              {ccy} {rv.instrument === 'caplet' ? 'caplet' : 'swaption'} vols (
              {rv.type === 'normal' ? 'normal, bp' : 'lognormal, %'})
            </h2>
            <table className="edit compact-table">
              <thead>
                <tr>
                  <th>Expiry (y)</th>
                  <th>Tenor (y)</th>
                  <th>Strike</th>
                  <th>Vol</th>
                </tr>
              </thead>
              <tbody>
                {rv.quotes.map((q, i) => (
                  <tr key={i}>
                    <td>{num(q.expiry, 4)}</td>
                    <td>{num(q.tenor, 4)}</td>
                    <td>{q.strike === undefined ? 'ATM' : pct(q.strike, 2)}</td>
                    <td>
                      <NumberField
                        label={`${ccy} vol ${i + 1}`}
                        compact
                        path={`rateVols.${ccy}.quotes[${i}].vol`}
                        value={q.vol}
                        scale={rv.type === 'normal' ? 1e4 : 100}
                        rule={{ above: 0 }}
                        onCommit={(v) => edit((x) => void (x.rateVols![ccy]!.quotes[i]!.vol = v))}
                      />
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </section>
        ))}
      </div>
      <LineChart
        title="Rate vols against expiry"
        xLabel="expiry (years)"
        yLabel={
          entries.every(([, rv]) => rv.type === 'normal')
            ? 'normal vol (bp)'
            : entries.every(([, rv]) => rv.type !== 'normal')
              ? 'lognormal vol (%)'
              : 'vol (normal in bp, lognormal in %)'
        }
        series={entries.map(([ccy, rv]) => ({
          name: `${ccy} (${rv.type})`,
          points: rv.quotes.map((q) => ({
            x: q.expiry,
            y: rv.type === 'normal' ? q.vol * 1e4 : q.vol * 100,
          })),
        }))}
      />
    </div>
  );
}

function Fx(props: { m: MarketSnapshot; edit: Edit }) {
  const { m, edit } = props;
  const entries = Object.entries(m.fx ?? {});
  if (entries.length === 0)
    return <p className="empty">This snapshot has no FX rates (a single-currency market).</p>;
  return (
    <section className="panel">
      <h2>FX rates</h2>
      <table className="edit">
        <thead>
          <tr>
            <th>Pair</th>
            <th>Quoted as</th>
            <th>Spot</th>
            <th>ATM vol (%)</th>
          </tr>
        </thead>
        <tbody>
          {entries.map(([k, f]) => (
            <tr key={k}>
              <td>{k}</td>
              <td>
                {f.domestic} per {f.foreign}
              </td>
              <td>
                <NumberField
                  label={`${k} spot`}
                  compact
                  path={`fx.${k}.spot`}
                  value={f.spot}
                  rule={{ above: 0 }}
                  onCommit={(v) => edit((x) => void (x.fx![k]!.spot = v))}
                />
              </td>
              <td>
                <NumberField
                  label={`${k} vol`}
                  compact
                  path={`fx.${k}.vol`}
                  value={f.vol}
                  scale={100}
                  rule={{ above: 0 }}
                  onCommit={(v) => edit((x) => void (x.fx![k]!.vol = v))}
                />
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}

function Correlation(props: { m: MarketSnapshot; edit: Edit }) {
  const { m, edit } = props;
  const { engine } = useApp();
  const { names, matrix } = m.correlation;
  const [check, setCheck] = useState<CorrelationCheck | null>(null);
  useEffect(() => {
    const ac = new AbortController();
    const t = setTimeout(() => {
      engine
        .call('market.checkCorrelation', { names, matrix }, { signal: ac.signal })
        .then(setCheck, () => {});
    }, 120);
    return () => {
      clearTimeout(t);
      ac.abort();
    };
  }, [names, matrix, engine]);
  const byField = useMemo(() => issuesByField(check?.issues ?? []), [check]);
  const psdIssue = check?.issues.find((i) => i.code === 'E_NOT_PSD');
  const ranges = Object.entries(m.correlationRanges ?? {});
  return (
    <div>
      <section className="panel">
        <h2>Correlation between drivers</h2>
        <p className="hint">
          Editing a cell also sets its mirror. Drivers: eq: equity, var: its variance, rate: short rate, fx:
          FX rate.
        </p>
        <div className="check-status" data-testid="psd-status" aria-live="polite">
          {check === null ? (
            'Checking…'
          ) : check.valid ? (
            <span className="ok">
              Positive semi-definite (smallest eigenvalue {num(check.minEigenvalue, 4)}).
            </span>
          ) : psdIssue ? (
            <span className="msg-error">
              Not positive semi-definite: smallest eigenvalue {num(check.minEigenvalue, 4)}. No simulation can
              use this matrix.
            </span>
          ) : (
            <span className="msg-error">
              {check.issues.filter((i) => i.severity === 'error').length} cell(s) to fix.
            </span>
          )}
        </div>
        {check?.nearest && (
          <div className="banner" data-testid="nearest-offer">
            The nearest valid correlation matrix (Higham 2002) is {num(check.nearest.distance, 3)} away in
            Frobenius norm.
            <div className="button-row">
              <button
                className="primary small"
                onClick={() =>
                  edit(
                    (x) =>
                      void (x.correlation.matrix = check.nearest!.matrix.map((r) =>
                        r.map((v) => Number(v.toFixed(6))),
                      )),
                  )
                }
                data-testid="use-nearest"
              >
                Use the nearest valid matrix
              </button>
              <span className="hint">
                Its entries replace yours (rounded to 6 decimals); you can edit them afterwards.
              </span>
            </div>
          </div>
        )}
        <IssueContext.Provider value={byField}>
          <div className="scroll-x">
            <table className="edit grid-table corr">
              <thead>
                <tr>
                  <th />
                  {names.map((n) => (
                    <th key={n} className="rot">
                      {n}
                    </th>
                  ))}
                </tr>
              </thead>
              <tbody>
                {names.map((ni, i) => (
                  <tr key={ni}>
                    <th>{ni}</th>
                    {names.map((nj, j) => (
                      <td
                        key={nj}
                        className={
                          i === j
                            ? 'diag'
                            : check?.nearest &&
                                Math.abs(check.nearest.matrix[i]![j]! - matrix[i]![j]!) > 0.005
                              ? 'changed'
                              : ''
                        }
                      >
                        {i === j ? (
                          '1'
                        ) : (
                          <NumberField
                            label={`${ni} with ${nj}`}
                            compact
                            path={`correlation.matrix[${i}][${j}]`}
                            value={matrix[i]![j]}
                            rule={{ min: -1, max: 1 }}
                            onCommit={(v) =>
                              edit((x) => {
                                x.correlation.matrix[i]![j] = v;
                                x.correlation.matrix[j]![i] = v;
                              })
                            }
                          />
                        )}
                        {check?.nearest && i !== j && (
                          <span className="nearest-hint" title="nearest valid value">
                            {num(check.nearest.matrix[i]![j]!, 3)}
                          </span>
                        )}
                      </td>
                    ))}
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </IssueContext.Provider>
      </section>
      <section className="panel">
        <h2>Plausible ranges of unquoted correlations (for sweeps)</h2>
        {ranges.length === 0 && <p className="empty">No ranges: the study will not sweep any correlation.</p>}
        <table className="edit compact-table">
          <thead>
            <tr>
              <th>Pair</th>
              <th>Low</th>
              <th>High</th>
            </tr>
          </thead>
          <tbody>
            {ranges.map(([k, [lo, hi]]) => (
              <tr key={k}>
                <td className="mono">{k}</td>
                <td>
                  <NumberField
                    label={`${k} low`}
                    compact
                    path={`correlationRanges.${k}[0]`}
                    value={lo}
                    rule={{ min: -1, max: 1 }}
                    onCommit={(v) => edit((x) => void (x.correlationRanges![k]![0] = v))}
                  />
                </td>
                <td>
                  <NumberField
                    label={`${k} high`}
                    compact
                    path={`correlationRanges.${k}[1]`}
                    value={hi}
                    rule={{ min: -1, max: 1 }}
                    onCommit={(v) => edit((x) => void (x.correlationRanges![k]![1] = v))}
                  />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
